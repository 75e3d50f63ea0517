// Decoding requests without surprises: bytes that are not a valid message, or a message above the size limit,
// become a marker the handlers answer with INVALID_ARGUMENT (grpc-js would answer INTERNAL or RESOURCE_EXHAUSTED).
import { createHash } from 'node:crypto';
import type * as grpc from '@grpc/grpc-js';
import { mebibytes } from './message-size.js';

const MALFORMED = Symbol('malformed request');
/** When decoding began (epoch ms), kept on the decoded message: a request's time limit counts from there. */
const RECEIVED_AT = Symbol('received at');
/** SHA-256 of a Solve request's bytes without its request id, kept on the decoded message (see requestFingerprint). */
const FINGERPRINT = Symbol('fingerprint');
/** Field number of request_id in renyibound.v1.SolveRequest: free text that changes no answer. */
const SOLVE_REQUEST_ID_FIELD = 6;

interface Malformed {
  [MALFORMED]: string;
}

/** Why a decoded request is unusable, or undefined for a real message. */
export function malformedReason(request: unknown): string | undefined {
  return request !== null && typeof request === 'object' && MALFORMED in request ? (request as Malformed)[MALFORMED] : undefined;
}

/** When the server began decoding this request (epoch ms), if it came through a guarded decoder. */
export function receivedAt(request: unknown): number | undefined {
  return request !== null && typeof request === 'object' ? (request as Record<symbol, number | undefined>)[RECEIVED_AT] : undefined;
}

/**
 * A key for repeats of a Solve request: SHA-256 of its encoded bytes with the request id left out, taken while
 * decoding (tens of microseconds, where stringifying the decoded message cost a quarter of a cache hit).
 */
export function requestFingerprint(request: unknown): string | undefined {
  return request !== null && typeof request === 'object' ? (request as Record<symbol, string | undefined>)[FINGERPRINT] : undefined;
}

/** Reads a base-128 varint at `offset`; [value, next offset], or undefined past the end. */
function readVarint(bytes: Buffer, offset: number): [number, number] | undefined {
  let value = 0;
  for (let shift = 1; offset < bytes.length; shift *= 128) {
    const byte = bytes[offset++];
    value += (byte & 0x7f) * shift;
    if (byte < 0x80) return [value, offset];
  }
  return undefined;
}

/** SHA-256 over the top-level fields of an encoded message except `skipped`; undefined if the bytes do not parse. */
function fingerprintWithout(bytes: Buffer, skipped: number): string | undefined {
  const hash = createHash('sha256');
  let offset = 0;
  while (offset < bytes.length) {
    const key = readVarint(bytes, offset);
    if (key === undefined) return undefined;
    const [tag, afterKey] = key;
    let end: number;
    switch (tag % 8) {
      case 0: {
        const value = readVarint(bytes, afterKey);
        if (value === undefined) return undefined;
        end = value[1];
        break;
      }
      case 1:
        end = afterKey + 8;
        break;
      case 2: {
        const length = readVarint(bytes, afterKey);
        if (length === undefined) return undefined;
        end = length[1] + length[0];
        break;
      }
      case 5:
        end = afterKey + 4;
        break;
      default:
        return undefined;
    }
    if (end > bytes.length) return undefined;
    if (Math.floor(tag / 8) !== skipped) hash.update(bytes.subarray(offset, end));
    offset = end;
  }
  return hash.digest('hex');
}

/** The service definition with every request decoder checking the size limit and catching decoding failures. */
export function guardRequests(definition: grpc.ServiceDefinition, maxMessageBytes: number): grpc.ServiceDefinition {
  const guarded: Record<string, grpc.MethodDefinition<unknown, unknown>> = {};
  for (const [name, method] of Object.entries(definition) as [string, grpc.MethodDefinition<unknown, unknown>][]) {
    guarded[name] = {
      ...method,
      requestDeserialize: (bytes: Buffer): unknown => {
        if (bytes.length > maxMessageBytes) {
          return {
            [MALFORMED]: `message of ${bytes.length} bytes (${mebibytes(bytes.length)}) exceeds the server's limit of ${maxMessageBytes} bytes ` +
              `(${mebibytes(maxMessageBytes)}; serve --max-message-mib)`,
          };
        }
        const started = Date.now();
        try {
          const message = method.requestDeserialize(bytes);
          // Not enumerable: fingerprints and copies of the message do not see it.
          if (message !== null && typeof message === 'object') {
            Object.defineProperty(message, RECEIVED_AT, { value: started });
            if (name === 'Solve') Object.defineProperty(message, FINGERPRINT, { value: fingerprintWithout(bytes, SOLVE_REQUEST_ID_FIELD) });
          }
          return message;
        } catch (error) {
          return { [MALFORMED]: `is not a valid ${name} request message (${(error as Error).message})` };
        }
      },
    };
  }
  return guarded as grpc.ServiceDefinition;
}
