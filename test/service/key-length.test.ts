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
import type { KeyLengthStreamItem__Output } from '../../src/service/generated/renyibound/v1/KeyLengthStreamItem.js';
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

function stream(address: string, request: KeyLengthRequest): Promise<{ error?: grpc.ServiceError; items: KeyLengthStreamItem__Output[] }> {
  return new Promise((resolve) => {
    const items: KeyLengthStreamItem__Output[] = [];
    const call = renyiBoundClient(address).KeyLengthStream(request);
    call.on('data', (item: KeyLengthStreamItem__Output) => items.push(item));
    call.on('error', (error: grpc.ServiceError) => resolve({ error, items }));
    call.on('end', () => resolve({ items }));
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

  it('KeyLengthStream: progress after every single-round solve, phase by phase, then the unary reply', async () => {
    const request = { problem: json as never, rounds: 1e7, ecEfficiency: 1, requestId: 'kls' };
    const { error, items } = await stream(address, request);
    expect(error).toBeUndefined();
    const last = items[items.length - 1];
    expect(last.item).toBe('reply');
    const progress = items.slice(0, -1).map((i) => i.progress!);
    expect(items.slice(0, -1).every((i) => i.item === 'progress')).toBe(true);
    // One message per solve, counted 1, 2, 3, …; the phases in the search's order.
    expect(progress.map((p) => p.singleRoundSolves)).toEqual(progress.map((_, k) => k + 1));
    const phases = progress.map((p) => p.phase);
    expect(phases[0]).toBe('starting-scores');
    expect(phases[phases.length - 1]).toBe('asymptotic-reference');
    expect(phases.filter((p) => p === 'alpha-search').length).toBe(last.reply!.singleRoundSolves);
    expect(phases.indexOf('asymptotic-reference')).toBeGreaterThan(phases.lastIndexOf('alpha-search'));
    const search = progress.filter((p) => p.phase === 'alpha-search');
    expect(search.every((p) => p.alpha! > 1 && p.alpha! <= 2 && Number.isFinite(p.singleRoundBound))).toBe(true);
    // The best rate of the finished ascents only rises, and ends at the reply's rate (to its floor of ℓ).
    const rates = progress.filter((p) => p.bestRatePerRound != null).map((p) => p.bestRatePerRound!);
    expect(rates.length).toBeGreaterThan(0);
    expect(rates.every((r, k) => k === 0 || r >= rates[k - 1])).toBe(true);
    expect(rates[rates.length - 1]).toBeCloseTo(last.reply!.ratePerRound, 6);
    // The same answer as the unary call (served from the cache the stream filled).
    const unary = await call(address, request);
    expect(unary.reply!.keyLength).toBe(last.reply!.keyLength);
    expect(unary.reply!.alpha).toBe(last.reply!.alpha);
    expect(last.reply!.requestId).toBe('kls');
  });

  it('KeyLengthStream: bad input ends the stream with INVALID_ARGUMENT naming the field, before any message', async () => {
    const { error, items } = await stream(address, { problem: json as never, rounds: -1 });
    expect(error?.code).toBe(grpc.status.INVALID_ARGUMENT);
    expect(String(error!.metadata.get(FIELD_METADATA_KEY)[0])).toBe('rounds');
    expect(items).toEqual([]);
  });
});
