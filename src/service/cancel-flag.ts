// A cancellation flag shared between the event loop and a solver thread (one Int32 in a SharedArrayBuffer).

/** Index of the flag inside its buffer. */
const FLAG_INDEX = 0;

/** Creates a fresh, lowered flag. */
export function createCancelFlag(): SharedArrayBuffer {
  return new SharedArrayBuffer(Int32Array.BYTES_PER_ELEMENT);
}

/** Raises the flag; the solver sees it at its next iteration. */
export function raiseCancelFlag(flag: SharedArrayBuffer): void {
  Atomics.store(new Int32Array(flag), FLAG_INDEX, 1);
}

/** A reader for SolveControl.isCancelled (Atomics, so the store from the other thread is seen at once). */
export function cancelFlagReader(flag: SharedArrayBuffer): () => boolean {
  const view = new Int32Array(flag);
  return () => Atomics.load(view, FLAG_INDEX) !== 0;
}
