// The service against a real server on a loopback port, with the real solver in worker threads (no mocks).
// Outside references: the von Neumann bound of entanglement-based BB84 is 1 − h(Q_X) (Shor & Preskill,
// PRL 85, 441, 2000); every certificate is re-checked by the project's independent verifier.
import { createRequire } from 'node:module';
import * as grpc from '@grpc/grpc-js';
import * as protoLoader from '@grpc/proto-loader';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { verifyResult } from '../../src/certificate/verify.js';
import type { SolveResult } from '../../src/result/types.js';
import { problemFromJson } from '../../src/problem/validate.js';
import { entropyRequestFrom } from '../../src/problem/entropy-request.js';
import { buildExample } from '../../src/protocols/index.js';
import { checkHealth, connect, RemoteCallError, solveBatchRemote, solveRemote, verifyRemote, type RemoteBatchItem } from '../../src/client/client.js';
import { FIELD_METADATA_KEY } from '../../src/service/errors.js';
import type { BatchRequest } from '../../src/service/generated/renyibound/v1/BatchRequest.js';
import type { SolveRequest } from '../../src/service/generated/renyibound/v1/SolveRequest.js';
import { SERVICE_NAME } from '../../src/service/proto.js';
import { binaryEntropy, eventually, sleep, slowProblem, startTestServer, type TestServer } from './harness.js';

/** Loose gap: these tests check plumbing and certificates, not convergence speed. */
const GAP = 1e-4;
/** Below the certificate's floating-point margin: the slow problem can only end by its time limit or a cancel. */
const UNREACHABLE_GAP = 1e-12;

function bb84(qberX: number, qberZ = qberX): unknown {
  return buildExample('bb84-entangled', { 'qber-z': qberZ, 'qber-x': qberX });
}

function slowRequest(fidelity: number, timeLimitMs: number): { problem: unknown; entropy: string; settings: { gapTolerance: number; timeLimitMs: number } } {
  return { problem: slowProblem(fidelity), entropy: 'von-neumann', settings: { gapTolerance: UNREACHABLE_GAP, timeLimitMs } };
}

/** The same slow request as a wire message for explicit-list batches. */
function slowWireRequest(fidelity: number, timeLimitMs: number): SolveRequest {
  return { problem: slowProblem(fidelity) as never, entropy: 'VON_NEUMANN', settings: { gapTolerance: UNREACHABLE_GAP, timeLimitMs } };
}

function verifies(problemJson: unknown, kind: string, alpha: number | undefined, result: SolveResult): boolean {
  const report = verifyResult(problemFromJson(problemJson), entropyRequestFrom(kind, alpha), result);
  return report.valid;
}

/** A unary call with the raw generated client, so bad input reaches the server unchecked. */
async function rawSolve(address: string, request: SolveRequest, deadline?: Date): Promise<grpc.ServiceError | undefined> {
  const { client } = await connect(address);
  return new Promise((resolve) => {
    client.Solve(request, deadline ? { deadline } : {}, (error) => resolve(error ?? undefined));
  });
}

async function rawBatchError(address: string, request: BatchRequest): Promise<grpc.ServiceError | undefined> {
  try {
    for await (const _ of (await connect(address)).client.SolveBatch(request)) {
      // drain
    }
  } catch (error) {
    return error as grpc.ServiceError;
  }
  return undefined;
}

async function collect(items: AsyncIterable<RemoteBatchItem>): Promise<RemoteBatchItem[]> {
  const out: RemoteBatchItem[] = [];
  for await (const item of items) out.push(item);
  return out;
}

function solveLogs(harness: TestServer): Record<string, unknown>[] {
  return harness.logs.filter((line) => line.event === 'solve');
}

describe('RenyiBound service on loopback', () => {
  let harness: TestServer;
  let address: string;

  beforeAll(async () => {
    harness = await startTestServer({ workers: 2 });
    address = harness.server.address;
  });
  afterAll(async () => {
    await harness.stop();
  });

  it('binds to loopback and reports SERVING through grpc.health.v1, for the server and the service', async () => {
    expect(address).toMatch(/^127\.0\.0\.1:\d+$/);
    expect(await checkHealth(address)).toBe('SERVING');
    expect(await checkHealth(address, SERVICE_NAME)).toBe('SERVING');
    expect(await checkHealth(address, 'no.such.Service')).toBe('SERVICE_UNKNOWN');
  });

  it('lists the service through server reflection', async () => {
    const require = createRequire(import.meta.url);
    const reflectionProto = require.resolve('@grpc/reflection/build/proto/grpc/reflection/v1/reflection.proto');
    const definition = protoLoader.loadSync(reflectionProto, { keepCase: false, defaults: true, oneofs: true });
    const Reflection = (grpc.loadPackageDefinition(definition) as any).grpc.reflection.v1.ServerReflection;
    const client = new Reflection(address, grpc.credentials.createInsecure());
    const stream = client.ServerReflectionInfo();
    const reply = await new Promise<any>((resolve, reject) => {
      stream.on('data', resolve);
      stream.on('error', reject);
      stream.write({ listServices: '' });
    });
    stream.end();
    client.close();
    const names = reply.listServicesResponse.service.map((s: { name: string }) => s.name);
    expect(names).toContain(SERVICE_NAME);
    expect(names).toContain('grpc.health.v1.Health');
  });

  it('Solve returns a certified bound at 1 − h(Q) that the verifier and the Verify call accept', async () => {
    const q = 0.05;
    const problem = bb84(q);
    const result = await solveRemote(address, { problem, entropy: 'von-neumann', settings: { gapTolerance: GAP }, requestId: 'unary-1' });
    expect(result.status).toBe('CERTIFIED');
    expect(result.fromCache).toBe(false);
    // Shor–Preskill: H(Z|E) = 1 − h(Q_X) is the exact minimum; the certified bound lies below it within the gap.
    expect(result.certifiedLowerBound!).toBeLessThanOrEqual(1 - binaryEntropy(q) + 1e-9);
    expect(result.certifiedLowerBound!).toBeGreaterThanOrEqual(1 - binaryEntropy(q) - 2 * GAP);
    expect(verifies(problem, 'von-neumann', undefined, result)).toBe(true);

    const verdict = await verifyRemote(address, { problem, entropy: 'von-neumann', result });
    expect(verdict.valid).toBe(true);
    const raised = structuredClone(result);
    raised.certifiedLowerBound = result.certifiedLowerBound! + 0.01;
    raised.certificate!.claimedBound = result.certificate!.claimedBound + 0.01;
    const rejected = await verifyRemote(address, { problem, entropy: 'von-neumann', result: raised });
    expect(rejected.valid).toBe(false);
    const otherProblem = await verifyRemote(address, { problem: bb84(0.06), entropy: 'von-neumann', result });
    expect(otherProblem.valid).toBe(false);
    expect(otherProblem.reason).toMatch(/hash/);
  });

  it('writes one JSON log line per solve with hash, status, iterations, gap, seconds and fromCache', async () => {
    const line = solveLogs(harness).find((l) => l.requestId === 'unary-1');
    expect(line).toBeDefined();
    expect(line).toMatchObject({ status: 'CERTIFIED', fromCache: false });
    for (const field of ['inputHash', 'iterations', 'gap', 'seconds']) expect(line).toHaveProperty(field);
    expect(solveLogs(harness).filter((l) => l.requestId === 'unary-1')).toHaveLength(1);
  });

  it('serves a repeated request from the cache: the identical result, marked fromCache', async () => {
    const request = { problem: bb84(0.031), entropy: 'petz-up', alpha: 1.5, settings: { gapTolerance: GAP } };
    const first = await solveRemote(address, request);
    const second = await solveRemote(address, request);
    expect(first.fromCache).toBe(false);
    expect(second.fromCache).toBe(true);
    expect({ ...second, fromCache: false }).toEqual(first);
    expect(verifies(request.problem, 'petz-up', 1.5, second)).toBe(true);
  });

  it('solves identical concurrent requests once', async () => {
    const request = { problem: bb84(0.032), entropy: 'von-neumann', settings: { gapTolerance: GAP }, requestId: 'concurrent' };
    const results = await Promise.all([1, 2, 3].map(() => solveRemote(address, request)));
    const bounds = new Set(results.map((r) => r.certifiedLowerBound));
    expect(bounds.size).toBe(1);
    const fresh = solveLogs(harness).filter((l) => l.requestId === 'concurrent' && l.fromCache === false && !l.sharedSolve);
    expect(fresh).toHaveLength(1);
  });

  it('answers INFEASIBLE statistics with a result carrying its Farkas certificate, not an error', async () => {
    // A CHSH win probability of 0.9 exceeds Tsirelson's bound cos²(π/8) ≈ 0.854 (Tsirelson 1980).
    const problem = buildExample('chsh-tested', { 'win-probability': 0.9 });
    const result = await solveRemote(address, { problem, entropy: 'von-neumann', settings: { gapTolerance: GAP } });
    expect(result.status).toBe('INFEASIBLE');
    expect(result.certifiedLowerBound).toBeNull();
    expect(result.infeasibility!.violation).toBeGreaterThan(0);
    expect(result.infeasibility!.dominantConstraints.length).toBeGreaterThan(0);
    // Verify re-checks the Farkas certificate from the problem alone.
    const verdict = await verifyRemote(address, { problem, entropy: 'von-neumann', result });
    expect(verdict.valid).toBe(true);
    expect(verdict.reason).toMatch(/infeasibility verified/);
  });

  it('streams a 50-point grid: every point once, progress counting up, each certificate verified', async () => {
    const values = Array.from({ length: 25 }, (_, i) => 0.005 + 0.004 * i);
    const batch = solveBatchRemote(address, {
      grid: {
        example: 'bb84-entangled',
        baseParameters: { 'qber-z': 0.05, alpha: 1.5 },
        axes: [{ name: 'qber-x', values }],
        entropies: ['VON_NEUMANN', 'PETZ_UP'],
        settings: { gapTolerance: GAP },
      },
      requestId: 'grid-50',
    });
    const items = await collect(batch.items);
    expect(items).toHaveLength(50);
    expect(items.map((i) => i.index).sort((a, b) => a - b)).toEqual(Array.from({ length: 50 }, (_, i) => i));
    expect(items.map((i) => i.done)).toEqual(Array.from({ length: 50 }, (_, i) => i + 1));
    expect(items.every((i) => i.total === 50)).toBe(true);
    for (const item of items) {
      expect(item.error).toBeUndefined();
      const result = item.result!;
      expect(['CERTIFIED', 'LIMIT_REACHED']).toContain(result.status);
      const qberX = item.point['qber-x'];
      const problem = buildExample('bb84-entangled', { 'qber-z': 0.05, 'qber-x': qberX });
      const vonNeumann = item.entropy === 'VON_NEUMANN';
      expect(verifies(problem, vonNeumann ? 'von-neumann' : 'petz-up', vonNeumann ? undefined : 1.5, result)).toBe(true);
      if (vonNeumann) {
        // Shor–Preskill again, at every grid point.
        expect(result.certifiedLowerBound!).toBeLessThanOrEqual(1 - binaryEntropy(qberX) + 1e-9);
        expect(result.certifiedLowerBound!).toBeGreaterThanOrEqual(1 - binaryEntropy(qberX) - 2 * GAP);
      } else {
        expect(item.point.alpha).toBe(1.5);
      }
    }
  }, 60_000);

  it('reports a bad grid point in its item and finishes the rest of the batch', async () => {
    const items = await collect(
      solveBatchRemote(address, {
        grid: {
          example: 'bb84-entangled',
          baseParameters: {},
          axes: [
            { name: 'qber-x', values: [0.02, 1.5] },
            { name: 'alpha', values: [1.5, 3] },
          ],
          entropies: ['PETZ_UP'],
          settings: { gapTolerance: GAP },
        },
      }).items,
    );
    expect(items).toHaveLength(4);
    const byIndex = new Map(items.map((i) => [i.index, i]));
    expect(byIndex.get(0)!.result?.status).toBe('CERTIFIED');
    expect(byIndex.get(1)!.error).toMatchObject({ field: 'grid.axes[1].values[1]' });
    expect(byIndex.get(1)!.error!.message).toMatch(/\(1, 2\]/);
    expect(byIndex.get(2)!.error).toMatchObject({ field: 'grid.axes[0].values[1]' });
    expect(byIndex.get(3)!.error).toBeDefined();
  });

  it('answers every class of bad input with INVALID_ARGUMENT naming the field', async () => {
    const good = bb84(0.05) as Record<string, unknown>;
    const cases: { request: SolveRequest; field: string }[] = [
      { request: { entropy: 'VON_NEUMANN' }, field: 'problem' },
      { request: { problem: good as never }, field: 'entropy' },
      { request: { problem: good as never, entropy: 'PETZ_UP' }, field: 'alpha' },
      { request: { problem: good as never, entropy: 'PETZ_UP', alpha: 2.5 }, field: 'alpha' },
      { request: { problem: good as never, entropy: 'VON_NEUMANN', alpha: 1.5 }, field: 'alpha' },
      { request: { problem: good as never, entropy: 'VON_NEUMANN', settings: { gapTolerance: -1 } }, field: 'settings.gapTolerance' },
      {
        request: { problem: good as never, entropy: 'VON_NEUMANN', warmStart: { rows: 3, cols: 3, re: [1, 0, 0, 0, 0, 0, 0, 0, 0] } },
        field: 'warmStart',
      },
      { request: { problem: { ...good, dimensionA: 0 } as never, entropy: 'VON_NEUMANN' }, field: 'problem.dimensionA' },
      {
        request: {
          problem: { ...good, constraints: [{ label: 'x', operator: { rows: 2, cols: 2, re: [1, 0, 0, 1] }, lower: 0, upper: 1 }] } as never,
          entropy: 'VON_NEUMANN',
        },
        field: 'problem.constraints[0].operator',
      },
      {
        request: { problem: { ...good, branches: [{ ...(good.branches as object[])[0], krausOperators: [] }] } as never, entropy: 'VON_NEUMANN' },
        field: 'problem.branches',
      },
    ];
    for (const { request, field } of cases) {
      const error = await rawSolve(address, request);
      expect(error?.code, `expected INVALID_ARGUMENT for ${field}`).toBe(grpc.status.INVALID_ARGUMENT);
      const reported = String(error!.metadata.get(FIELD_METADATA_KEY)[0]);
      expect(reported.startsWith(field), `${reported} should start with ${field}`).toBe(true);
      expect(error!.details.startsWith(`${reported}: `)).toBe(true);
    }

    const grid = { example: 'bb84-entangled', baseParameters: {}, axes: [{ name: 'qber-x', values: [0.05] }], entropies: ['VON_NEUMANN' as const] };
    const batchCases: { request: BatchRequest; field: string }[] = [
      { request: {}, field: 'source' },
      { request: { grid: { ...grid, example: 'no-such-protocol' } }, field: 'grid.example' },
      { request: { grid: { ...grid, entropies: [] } }, field: 'grid.entropies' },
      { request: { grid: { ...grid, axes: [{ name: 'qber-x', values: [] }] } }, field: 'grid.axes[0].values' },
      { request: { grid: { ...grid, settings: { gapTolerance: 5 } } }, field: 'grid.settings.gapTolerance' },
    ];
    for (const { request, field } of batchCases) {
      const error = await rawBatchError(address, request);
      expect(error?.code, `expected INVALID_ARGUMENT for ${field}`).toBe(grpc.status.INVALID_ARGUMENT);
      expect(String(error!.metadata.get(FIELD_METADATA_KEY)[0])).toBe(field);
    }

    // A bad request inside an explicit list fails its own item only.
    const items = await collect(
      solveBatchRemote(address, {
        requests: { requests: [{ problem: good as never, entropy: 'VON_NEUMANN', settings: { gapTolerance: GAP } }, { problem: good as never }] },
      }).items,
    );
    expect(items).toHaveLength(2);
    expect(items.find((i) => i.index === 1)!.error!.field).toBe('requests.requests[1].entropy');
    expect(items.find((i) => i.index === 0)!.result!.status).toBe('CERTIFIED');

    // The client checks problems locally too, with the same field paths.
    await expect(solveRemote(address, { problem: { ...good, dimensionB: -1 }, entropy: 'von-neumann' })).rejects.toThrow(/dimensionB/);
  });

  it('an expired deadline ends the call with DEADLINE_EXCEEDED and stops the solver', async () => {
    const already = await rawSolve(address, { problem: bb84(0.05) as never, entropy: 'VON_NEUMANN' }, new Date(Date.now() - 1));
    expect(already?.code).toBe(grpc.status.DEADLINE_EXCEEDED);

    // Stopped by the flag, not by its own (much longer) time limit: the log line says `cancelled`, not `time`.
    const timeLimitMs = 20_000;
    const error = await solveRemote(address, { ...slowRequest(0.941, timeLimitMs), requestId: 'deadline' }, { deadlineMs: 400 }).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(RemoteCallError);
    expect((error as RemoteCallError).code).toBe(grpc.status.DEADLINE_EXCEEDED);
    expect(await eventually(() => solveLogs(harness).some((l) => l.requestId === 'deadline'), timeLimitMs / 2)).toBe(true);
    const line = solveLogs(harness).find((l) => l.requestId === 'deadline')!;
    expect(line.limit).toBe('cancelled');
    expect(harness.server.pool.pending).toBe(0);
  }, 40_000);

  it('cancelling a batch mid-way stops its running solves and sends nothing more', async () => {
    const timeLimitMs = 20_000;
    const fast = (q: number): SolveRequest => ({ problem: bb84(q) as never, entropy: 'VON_NEUMANN', settings: { gapTolerance: GAP } });
    const batch = solveBatchRemote(address, {
      requests: { requests: [fast(0.061), fast(0.062), ...[0.951, 0.952, 0.953, 0.954].map((f) => slowWireRequest(f, timeLimitMs))] },
      requestId: 'cancelled-batch',
    });
    const received: RemoteBatchItem[] = [];
    const consumer = (async () => {
      try {
        for await (const item of batch.items) received.push(item);
      } catch (error) {
        return error;
      }
      return undefined;
    })();
    // Both quick points are in, and both threads are busy with slow ones.
    expect(await eventually(() => received.length === 2 && harness.server.pool.pending === 2, 8000)).toBe(true);
    batch.cancel();
    const error = await consumer;
    expect((error as RemoteCallError).code).toBe(grpc.status.CANCELLED);
    expect(await eventually(() => harness.server.pool.pending === 0, timeLimitMs / 2)).toBe(true);
    expect(await eventually(() => harness.logs.some((l) => l.event === 'batch' && l.requestId === 'cancelled-batch' && l.cancelled === true), 2000)).toBe(true);
    const finished = harness.logs.find((l) => l.event === 'batch' && l.requestId === 'cancelled-batch' && 'done' in l)!;
    expect(finished.done as number).toBeLessThan(6);
    expect(received).toHaveLength(2);
    const slowLines = solveLogs(harness).filter((l) => l.requestId === 'cancelled-batch' && l.status === 'LIMIT_REACHED');
    expect(slowLines.length).toBe(2);
    expect(slowLines.every((l) => l.limit === 'cancelled')).toBe(true);
  }, 60_000);

  it('loses no point when a worker thread is killed mid-batch', async () => {
    const fidelities = [0.961, 0.962];
    const lossesBefore = harness.server.pool.threadLosses;
    const batch = solveBatchRemote(address, { requests: { requests: fidelities.map((f) => slowWireRequest(f, 300)) } });
    const consumer = collect(batch.items);
    // Kill a thread while both are running a point.
    expect(await eventually(() => harness.server.pool.pending === 2, 8000)).toBe(true);
    await sleep(150);
    await harness.server.pool.threads[0].terminate();
    const items = await consumer;
    expect(harness.server.pool.threadLosses).toBeGreaterThan(lossesBefore);
    expect(items.map((i) => i.index).sort((a, b) => a - b)).toEqual(fidelities.map((_, i) => i));
    for (const item of items) {
      expect(item.error).toBeUndefined();
      expect(item.result!.status).toBe('LIMIT_REACHED');
      expect(verifies(slowProblem(fidelities[item.index]), 'von-neumann', undefined, item.result!)).toBe(true);
    }
  }, 60_000);
});

describe('queue bound', () => {
  it('answers RESOURCE_EXHAUSTED when the queue is full', async () => {
    const harness = await startTestServer({ workers: 1, queueLimit: 0, cacheDirectory: false });
    try {
      const address = harness.server.address;
      const running = solveRemote(address, slowRequest(0.971, 600));
      expect(await eventually(() => harness.server.pool.pending === 1, 4000)).toBe(true);
      const refused = await solveRemote(address, slowRequest(0.972, 600)).catch((e: unknown) => e);
      expect((refused as RemoteCallError).code).toBe(grpc.status.RESOURCE_EXHAUSTED);
      const batchRefused = await rawBatchError(address, {
        grid: { example: 'bb84-entangled', axes: [{ name: 'qber-x', values: [0.05] }], entropies: ['VON_NEUMANN'] },
      });
      expect(batchRefused?.code).toBe(grpc.status.RESOURCE_EXHAUSTED);
      expect((await running).status).toBe('LIMIT_REACHED');
    } finally {
      await harness.stop();
    }
  }, 20_000);
});

describe('graceful shutdown', () => {
  it('goes NOT_SERVING, refuses new calls, and completes the solve in flight', async () => {
    const harness = await startTestServer({ workers: 1, cacheDirectory: false });
    const address = harness.server.address;
    const running = solveRemote(address, slowRequest(0.981, 800));
    expect(await eventually(() => harness.server.pool.pending === 1, 4000)).toBe(true);
    const shutdown = harness.server.shutdown();
    expect(harness.server.status).toBe('NOT_SERVING');
    const result = await running;
    // Finished by its own time limit, not cut short.
    expect(result.status).toBe('LIMIT_REACHED');
    expect(result.limit).toBe('time');
    await shutdown;
    const late = await solveRemote(address, { problem: bb84(0.05), entropy: 'von-neumann' }, { deadlineMs: 1000 }).catch((e: unknown) => e);
    expect(late).toBeInstanceOf(RemoteCallError);
    expect(await checkHealth(address, '', { deadlineMs: 500 })).not.toBe('SERVING');
    await harness.stop();
  }, 20_000);

  it('after the drain timeout cancels what is left: unary calls get their bound, batches an UNAVAILABLE', async () => {
    const harness = await startTestServer({ workers: 1, cacheDirectory: false, drainTimeoutMs: 300 });
    const address = harness.server.address;
    const unaryCall = solveRemote(address, slowRequest(0.982, 20_000));
    expect(await eventually(() => harness.server.pool.pending === 1, 8000)).toBe(true);
    const batch = solveBatchRemote(address, { requests: { requests: [slowWireRequest(0.983, 20_000)] } });
    const batchOutcome = collect(batch.items).catch((e: unknown) => e);
    // The batch point waits behind the unary solve (or is still being prepared) when the drain runs out.
    expect(await eventually(() => harness.server.pool.pending === 2, 8000)).toBe(true);
    await harness.server.shutdown();
    const result = await unaryCall;
    expect(result.status).toBe('LIMIT_REACHED');
    expect(result.limit).toBe('cancelled');
    const error = await batchOutcome;
    expect((error as RemoteCallError).code).toBe(grpc.status.UNAVAILABLE);
    expect((error as RemoteCallError).details).toMatch(/shutting down/);
    await harness.stop();
  }, 30_000);
});
