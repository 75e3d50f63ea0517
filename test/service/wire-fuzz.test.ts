// Property-based fuzz of malformed requests through the real server (issue: bad requests on the wire). Every
// malformed request must be answered INVALID_ARGUMENT naming the field (metadata `renyi-bound-field`, and the
// message starting with it), and the server must keep serving. The longer run is `npm run fuzz:wire`.
import * as grpc from '@grpc/grpc-js';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildExample } from '../../src/protocols/index.js';
import { checkHealth } from '../../src/client/client.js';
import { loadServicePackage } from '../../src/service/proto.js';
import { startTestServer, type TestServer } from './harness.js';
import { badRequestProblem, garbageBytes, malformedRequest, RawClient } from './wire-fuzz-cases.js';

/** Cases per property in the suite: 500 structured requests + 200 raw byte strings. */
const STRUCTURED_RUNS = 500;
const GARBAGE_RUNS = 200;
/** Fixed seed: a failure reproduces; the longer script draws fresh seeds. */
const SEED = 20_261_202;

const encodeSolveRequest = (request: unknown): Buffer =>
  loadServicePackage().renyibound.v1.RenyiBound.service.Solve.requestSerialize(request as never);

describe('malformed requests on the wire', () => {
  let harness: TestServer;
  let raw: RawClient;
  beforeAll(async () => {
    harness = await startTestServer({ workers: 1, cacheDirectory: false });
    raw = new RawClient(harness.server.address);
  });
  afterAll(async () => {
    raw.close();
    await harness.stop();
  });

  it(`answers ${STRUCTURED_RUNS} malformed Solve requests INVALID_ARGUMENT, blaming a mutated field`, async () => {
    await fc.assert(
      fc.asyncProperty(malformedRequest, async ({ request, blame }) => {
        const reply = await raw.call('Solve', encodeSolveRequest(request));
        const problem = badRequestProblem(reply, blame);
        if (problem !== undefined) throw new Error(problem);
      }),
      { numRuns: STRUCTURED_RUNS, seed: SEED },
    );
    expect(await checkHealth(harness.server.address)).toBe('SERVING');
  });

  it(`answers ${GARBAGE_RUNS} byte strings that are no SolveRequest INVALID_ARGUMENT with a field path`, async () => {
    await fc.assert(
      fc.asyncProperty(garbageBytes, async (bytes) => {
        const reply = await raw.call('Solve', Buffer.from(bytes));
        const problem = badRequestProblem(reply);
        if (problem !== undefined) throw new Error(problem);
      }),
      { numRuns: GARBAGE_RUNS, seed: SEED },
    );
  });

  it('still serves a valid request after the fuzz (the encoding path itself is sound)', async () => {
    const request = { problem: buildExample('bb84-entangled', { 'qber-z': 0.02, 'qber-x': 0.04 }), entropy: 'VON_NEUMANN', settings: { gapTolerance: 1e-6 } };
    const reply = await raw.call('Solve', encodeSolveRequest(request));
    expect(reply.code).toBe(grpc.status.OK);
    expect(harness.logs.filter((line) => line.level !== undefined && Number(line.level) >= 50)).toEqual([]);
  });
});
