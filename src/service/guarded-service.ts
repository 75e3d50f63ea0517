// Decoding requests without surprises: bytes that are not a valid message, or a message above the size limit,
// become a marker the handlers answer with INVALID_ARGUMENT (grpc-js would answer INTERNAL or RESOURCE_EXHAUSTED).
import type * as grpc from '@grpc/grpc-js';
import { mebibytes } from './message-size.js';

const MALFORMED = Symbol('malformed request');
/** When decoding began (epoch ms), kept on the decoded message: a request's time limit counts from there. */
const RECEIVED_AT = Symbol('received at');

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
          if (message !== null && typeof message === 'object') Object.defineProperty(message, RECEIVED_AT, { value: started });
          return message;
        } catch (error) {
          return { [MALFORMED]: `is not a valid ${name} request message (${(error as Error).message})` };
        }
      },
    };
  }
  return guarded as grpc.ServiceDefinition;
}
