// The decoder's fingerprint of a Solve request (the key of the prepared-request memo): equal for repeats that
// differ only in the request id, different when anything that changes the answer differs.
import { describe, expect, it } from 'vitest';
import { buildExample } from '../../src/protocols/index.js';
import { guardRequests, receivedAt, requestFingerprint } from '../../src/service/guarded-service.js';
import { loadServicePackage } from '../../src/service/proto.js';
import type { SolveRequest } from '../../src/service/generated/renyibound/v1/SolveRequest.js';

const service = loadServicePackage().renyibound.v1.RenyiBound.service;
const solve = service.Solve as unknown as { requestSerialize(value: SolveRequest): Buffer };
const guarded = guardRequests(service, 64 << 20).Solve as unknown as { requestDeserialize(bytes: Buffer): unknown };

function decoded(request: SolveRequest): unknown {
  return guarded.requestDeserialize(solve.requestSerialize(request));
}

describe('Solve request fingerprint', () => {
  const base: SolveRequest = {
    problem: buildExample('bb84-entangled', { 'qber-x': 0.05 }) as SolveRequest['problem'],
    entropy: 'VON_NEUMANN',
    settings: { gapTolerance: 1e-6 },
  };

  it('ignores the request id and nothing else', () => {
    const plain = requestFingerprint(decoded(base));
    expect(plain).toMatch(/^[0-9a-f]{64}$/);
    expect(requestFingerprint(decoded({ ...base, requestId: 'run 17, point 3' }))).toBe(plain);
    expect(requestFingerprint(decoded({ ...base, settings: { gapTolerance: 1e-7 } }))).not.toBe(plain);
    expect(requestFingerprint(decoded({ ...base, entropy: 'PETZ_UP', alpha: 1.5 }))).not.toBe(plain);
    const other = buildExample('bb84-entangled', { 'qber-x': 0.06 }) as SolveRequest['problem'];
    expect(requestFingerprint(decoded({ ...base, problem: other }))).not.toBe(plain);
  });

  it('is invisible to copies and serialisation of the message, which carries when decoding began', () => {
    const before = Date.now();
    const message = decoded({ ...base, requestId: 'x' }) as Record<string, unknown>;
    expect(JSON.stringify(message)).not.toMatch(/fingerprint/);
    expect(requestFingerprint({ ...message })).toBeUndefined();
    expect(receivedAt(message)!).toBeGreaterThanOrEqual(before);
  });
});
