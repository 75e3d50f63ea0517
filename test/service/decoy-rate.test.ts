// The DecoyRate RPC through a real server: the same answer as the library call, and field-path errors as
// INVALID_ARGUMENT (docs/decoy.md).
import * as grpc from '@grpc/grpc-js';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { renyiBoundClient } from '../../src/client/client.js';
import type { DecoyRateReply__Output } from '../../src/service/generated/renyibound/v1/DecoyRateReply.js';
import type { DecoyRateRequest } from '../../src/service/generated/renyibound/v1/DecoyRateRequest.js';
import type { VerifyDecoyRateReply__Output } from '../../src/service/generated/renyibound/v1/VerifyDecoyRateReply.js';
import { startTestServer, type TestServer } from './harness.js';

let test: TestServer;
beforeAll(async () => {
  test = await startTestServer({ cacheDirectory: false });
});
afterAll(async () => {
  await test.stop();
});

function call(request: DecoyRateRequest): Promise<{ error?: grpc.ServiceError; reply?: DecoyRateReply__Output }> {
  return new Promise((resolve) => {
    renyiBoundClient(test.server.address).DecoyRate(request, (error, reply) => resolve({ error: error ?? undefined, reply }));
  });
}

/** Gobby, Yuan, Shields, APL 84, 3762 (2004). */
const GYS = { fiberLossDbPerKm: 0.21, detectorEfficiency: 0.045, darkCountYield: 1.7e-6, misalignment: 0.033 };

describe('DecoyRate RPC', () => {
  it('a sweep from a channel: typed points and the full JSON answer agree', async () => {
    const { error, reply } = await call({
      channel: { distanceKm: 0, ...GYS },
      protocol: { signal: 0.48, decoys: [0.1, 0], zBasisProbability: 0.8, ecEfficiency: 1.22 },
      sweepDistancesKm: [0, 150],
      timeLimitMs: 5000,
    });
    expect(error).toBeUndefined();
    expect(reply!.sweep).toHaveLength(2);
    const answer = JSON.parse(reply!.answerJson) as { sweep: { ratePerPulse: number }[] };
    expect(reply!.sweep[0].ratePerPulse).toBe(answer.sweep[0].ratePerPulse);
    expect(reply!.sweep[0].ratePerPulse!).toBeGreaterThan(0);
    // Beyond the reach of the GYS channel (about 140 km; Ma, Qi, Zhao, Lo 2005) there is no key.
    expect(reply!.sweep[1].ratePerPulse!).toBeLessThan(0);
  }, 120_000);

  it('a point verifies with VerifyDecoyRate; a tampered answer is invalid with the reason; bad JSON is INVALID_ARGUMENT', async () => {
    const { error, reply } = await call({
      channel: { distanceKm: 50, ...GYS },
      protocol: { signal: 0.48, decoys: [0.1, 0], zBasisProbability: 0.5, ecEfficiency: 1.22 },
    });
    expect(error).toBeUndefined();
    expect(reply!.singlePhotonStatus).toBe('CERTIFIED');
    const client = renyiBoundClient(test.server.address);
    const verify = (answerJson: string) =>
      new Promise<{ error?: grpc.ServiceError; reply?: VerifyDecoyRateReply__Output }>((resolve) =>
        client.VerifyDecoyRate({ answerJson }, (e, r) => resolve({ error: e ?? undefined, reply: r })),
      );
    const good = await verify(reply!.answerJson);
    expect(good.reply).toMatchObject({ valid: true, ratePerPulse: reply!.ratePerPulse, singlePhotonBound: reply!.singlePhotonBound });
    const answer = JSON.parse(reply!.answerJson) as { singlePhotonBound: number };
    const bad = await verify(JSON.stringify({ ...answer, singlePhotonBound: answer.singlePhotonBound * 1.001 }));
    expect(bad.reply!.valid).toBe(false);
    expect(bad.reply!.reason).toMatch(/^singlePhotonBound: /);
    const malformed = await verify('{"ratePerPulse": ');
    expect(malformed.error?.code).toBe(grpc.status.INVALID_ARGUMENT);
    expect(malformed.error?.details).toMatch(/^answerJson: is not JSON/);
  }, 120_000);

  it('bad counts come back as INVALID_ARGUMENT naming the field', async () => {
    const { error } = await call({
      counts: {
        signal: 0.5,
        decoys: [0.1],
        sessions: [{ distanceKm: 5, counts: [{ intensity: 0.5, basis: 'Z', pulses: 10, detections: 20, errors: 0 }] }],
      },
    });
    expect(error?.code).toBe(grpc.status.INVALID_ARGUMENT);
    expect(error?.details).toBe('counts.sessions[0].counts[0].detections: must not exceed pulses (20 > 10)');
  });
});
