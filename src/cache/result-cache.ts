// The tiered result cache: memory → SQLite → Redis, with verification on every untrusted read and every store.
import { SOLVER_VERSION } from '../certificate/version.js';
import type { SolveResult } from '../result/types.js';
import type { CacheLayer } from './layer.js';

/** Re-checks a result against the problem it claims to answer (the certificate verifier, bound to one request). */
export type ResultCheck = (result: SolveResult) => { valid: boolean; reason: string };

/** Where a cache event happened and why; the service turns these into log lines. */
export interface CacheEvent {
  kind: 'rejected' | 'corrupt' | 'layer-error';
  layer: string;
  inputHash: string;
  reason: string;
}

/**
 * Which results are worth keeping. Time limits and cancellations depend on the machine and the moment, not
 * on the input, so those results are never stored; an iteration limit is part of the input hash and a stalled
 * gap ('no-progress') is reached again by the same input, so those are.
 * INFEASIBLE results are not stored: their Farkas certificate is not re-checked by the certificate verifier,
 * and detecting infeasibility takes a single oracle call anyway.
 */
export function isCacheable(result: SolveResult): boolean {
  if (result.certificate === null || result.certifiedLowerBound === null) return false;
  if (result.certificate.solverVersion !== SOLVER_VERSION) return false;
  if (result.status === 'CERTIFIED') return true;
  return result.status === 'LIMIT_REACHED' && (result.limit === 'iterations' || result.limit === 'no-progress');
}

/** The stored form drops fields that describe this particular delivery rather than the answer. */
function serialize(result: SolveResult): string {
  const { fromCache: _ignored, ...answer } = result as SolveResult & { fromCache?: boolean };
  return JSON.stringify(answer);
}

function looksLikeResult(value: unknown): value is SolveResult {
  if (typeof value !== 'object' || value === null) return false;
  const candidate = value as Record<string, unknown>;
  return typeof candidate.status === 'string' && typeof candidate.inputHash === 'string' && 'certificate' in candidate;
}

export class ResultCache {
  constructor(
    readonly layers: CacheLayer[],
    private readonly onEvent: (event: CacheEvent) => void = () => {},
  ) {}

  /**
   * The first usable entry for `inputHash`, walking the tiers from fastest to slowest. Entries from untrusted
   * tiers must parse, carry the same input hash and pass `check`; anything else is deleted, reported and skipped.
   * A hit is copied into the faster tiers.
   */
  async lookup(inputHash: string, check: ResultCheck): Promise<SolveResult | undefined> {
    for (let index = 0; index < this.layers.length; index++) {
      const layer = this.layers[index];
      let stored: string | undefined;
      try {
        stored = await layer.get(inputHash);
      } catch (error) {
        this.onEvent({ kind: 'layer-error', layer: layer.name, inputHash, reason: (error as Error).message });
        continue;
      }
      if (stored === undefined) continue;
      const result = this.accept(layer, inputHash, stored, check);
      if (result === undefined) {
        await layer.delete(inputHash).catch(() => {});
        continue;
      }
      for (const faster of this.layers.slice(0, index)) await this.safeSet(faster, inputHash, stored);
      return result;
    }
    return undefined;
  }

  /**
   * Stores a freshly computed result in every tier, but only when it is cacheable and `check` (the full result
   * verifier: lower bound, upper bound at the final state, its feasibility, the gap and the status) accepts it.
   */
  async store(inputHash: string, result: SolveResult, check: ResultCheck): Promise<boolean> {
    if (!isCacheable(result) || result.inputHash !== inputHash) return false;
    const verdict = check(result);
    if (!verdict.valid) {
      this.onEvent({ kind: 'rejected', layer: 'solver', inputHash, reason: verdict.reason });
      return false;
    }
    const stored = serialize(result);
    for (const layer of this.layers) await this.safeSet(layer, inputHash, stored);
    return true;
  }

  async close(): Promise<void> {
    for (const layer of this.layers) await layer.close().catch(() => {});
  }

  private accept(layer: CacheLayer, inputHash: string, stored: string, check: ResultCheck): SolveResult | undefined {
    let parsed: unknown;
    try {
      parsed = JSON.parse(stored);
    } catch {
      this.onEvent({ kind: 'corrupt', layer: layer.name, inputHash, reason: 'entry is not valid JSON' });
      return undefined;
    }
    if (!looksLikeResult(parsed)) {
      this.onEvent({ kind: 'corrupt', layer: layer.name, inputHash, reason: 'entry is not a solve result' });
      return undefined;
    }
    if (parsed.inputHash !== inputHash) {
      this.onEvent({ kind: 'rejected', layer: layer.name, inputHash, reason: 'entry carries another input hash' });
      return undefined;
    }
    // The version also enters the input hash; this catches entries written under a hash of the same name.
    if (parsed.certificate?.solverVersion !== SOLVER_VERSION) {
      this.onEvent({ kind: 'rejected', layer: layer.name, inputHash, reason: `entry written by solver ${parsed.certificate?.solverVersion}` });
      return undefined;
    }
    if (!layer.trusted) {
      let verdict: { valid: boolean; reason: string };
      try {
        verdict = check(parsed);
      } catch (error) {
        verdict = { valid: false, reason: `verifier failed: ${(error as Error).message}` };
      }
      if (!verdict.valid) {
        this.onEvent({ kind: 'rejected', layer: layer.name, inputHash, reason: verdict.reason });
        return undefined;
      }
    }
    return parsed;
  }

  private async safeSet(layer: CacheLayer, inputHash: string, stored: string): Promise<void> {
    try {
      await layer.set(inputHash, stored);
    } catch (error) {
      this.onEvent({ kind: 'layer-error', layer: layer.name, inputHash, reason: (error as Error).message });
    }
  }
}
