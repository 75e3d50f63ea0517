// The KeyLength RPC: the same ledger as the library, single-round solves cached by input hash, field-path errors.
import * as grpc from '@grpc/grpc-js';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { keyLength } from '../../src/finite-size/key-length.js';
import { buildExample } from '../../src/protocols/index.js';
import { problemFromJson } from '../../src/problem/validate.js';
import { closeClients, renyiBoundClient } from '../../src/client/client.js';
import { FIELD_METADATA_KEY } from '../../src/service/errors.js';
import type { KeyLengthReply__Output } from '../../src/service/generated/renyibound/v1/KeyLengthReply.js';
import type { KeyLengthRequest } from '../../src/service/generated/renyibound/v1/KeyLengthRequest.js';
import { verifyResult } from '../../src/certificate/verify.js';
import { wireToJson } from '../../src/service/wire.js';
import { startTestServer, type TestServer } from './harness.js';

// Key-length searches run dozens of single-round solves; on a shared machine that can take a while.
vi.setConfig({ testTimeout: 180_000, hookTimeout: 60_000 });

function call(address: string, request: KeyLengthRequest): Promise<{ error?: grpc.ServiceError; reply?: KeyLengthReply__Output }> {
  return new Promise((resolve) => {
    renyiBoundClient(address).KeyLength(request, (error, reply) => resolve({ error: error ?? undefined, reply }));
  });
}

describe('KeyLength RPC', () => {
  let test: TestServer;
  let address: string;
  beforeAll(async () => {
    test = await startTestServer();
    address = `127.0.0.1:${test.server.port}`;
  });
  afterAll(async () => {
    closeClients();
    await test.stop();
  });

  const json = buildExample('bb84-entangled', { 'qber-z': 0.02, 'qber-x': 0.02, 'test-probability': 0.02 });

  it('answers the library’s ledger (same solves, through the pool) and the Devetak–Winter reference 1 − 2h(Q)', async () => {
    const request = { problem: json as never, rounds: 1e8, alpha: 1.0002, variableLength: true, ecEfficiency: 1, requestId: 'kl' };
    const { error, reply } = await call(address, request);
    expect(error).toBeUndefined();
    const local = await keyLength(problemFromJson(json), { rounds: 1e8, alpha: 1.0002, variableLength: true, ecEfficiency: 1 });
    expect(reply!.keyLength).toBe(local.keyLength);
    expect(reply!.terms.map((t) => t.name)).toEqual(local.terms.map((t) => t.name));
    expect(reply!.requestId).toBe('kl');
    expect(reply!.variableLength!.intercept).toBeCloseTo(local.variableLength!.intercept, 3);
    // Shor & Preskill (2000): (1 − γ)(1 − 2h(Q)) with f_EC = 1.
    const h = -(0.02 * Math.log2(0.02) + 0.98 * Math.log2(0.98));
    expect(reply!.asymptoticRatePerRound).toBeCloseTo(0.98 * (1 - 2 * h), 5);
    const single = JSON.parse(reply!.singleRoundBoundJson);
    expect(single.certificate.entropy).toBe('sandwiched-up');
    // The independent verifier re-derives the certified single-round bound from the returned problem.
    const verified = verifyResult(problemFromJson(wireToJson(reply!.singleRoundProblem)), { kind: 'sandwiched-up', alpha: 1.0002 }, single);
    expect(verified.valid).toBe(true);
    // A repeat is served from the cache: every single-round solve hits.
    const hitsBefore = test.logs.filter((l) => (l as { fromCache?: boolean }).fromCache === true).length;
    const again = await call(address, request);
    expect(again.reply!.keyLength).toBe(reply!.keyLength);
    const hitsAfter = test.logs.filter((l) => (l as { fromCache?: boolean }).fromCache === true).length;
    expect(hitsAfter - hitsBefore).toBeGreaterThanOrEqual(again.reply!.singleRoundSolves);
  });

  it('names the field at fault', async () => {
    const cases: [KeyLengthRequest, string][] = [
      [{ problem: buildExample('bb84-entangled') as never, rounds: 1e6 }, 'honestStatistics'],
      [{ problem: json as never, rounds: 0 }, 'rounds'],
      [{ problem: json as never, rounds: 1e6, alpha: 3 }, 'alpha'],
      [{ problem: { ...json, honestStatistics: { branchProbabilities: [1] } } as never, rounds: 1e6 }, 'problem.honestStatistics.branchProbabilities'],
    ];
    for (const [request, field] of cases) {
      const { error } = await call(address, request);
      expect(error?.code).toBe(grpc.status.INVALID_ARGUMENT);
      expect(String(error!.metadata.get(FIELD_METADATA_KEY)[0])).toBe(field);
    }
  });
});
