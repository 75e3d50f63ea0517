// The client's small parsers and conversions: --server forms, --shard, round plot ticks, and the one-line
// messages remote failures become on the command line.
import * as grpc from '@grpc/grpc-js';
import { describe, expect, it } from 'vitest';
import { commandLineError, isReplicaFailure, RemoteCallError } from '../../src/client/errors.js';
import { roundTicks } from '../../src/client/report.js';
import { parseServers, resolveServers } from '../../src/client/servers.js';
import { gridPoints, inShard, parseShard } from '../../src/client/sweep.js';
import { ValidationError } from '../../src/problem/errors.js';
import { EXAMPLES } from '../../src/protocols/index.js';

describe('--server', () => {
  it('turns one address, a list and a DNS name into gRPC targets that round robin can spread over', () => {
    expect(parseServers('127.0.0.1:50051').target).toBe('ipv4:127.0.0.1:50051');
    expect(parseServers('127.0.0.1:1, 127.0.0.2:2').target).toBe('ipv4:127.0.0.1:1,127.0.0.2:2');
    expect(parseServers('[::1]:50051').target).toBe('ipv6:[::1]:50051');
    expect(parseServers('renyi-bound-headless.qkd.svc.cluster.local:50051').target).toBe('dns:renyi-bound-headless.qkd.svc.cluster.local:50051');
    expect(parseServers('dns:///replicas.example:50051')).toMatchObject({ target: 'dns:replicas.example:50051', entries: ['replicas.example:50051'] });
    // Names inside a list are resolved when connecting.
    expect(parseServers('localhost:1,127.0.0.1:2').target).toBe('');
  });

  it('rejects what is not host:port, naming the option', () => {
    for (const bad of ['', 'no-port', 'host:0', 'host:99999', 'a b:1', '127.0.0.1:1,[::1]:2']) {
      expect(() => parseServers(bad), bad).toThrow(ValidationError);
    }
    expect(() => parseServers('nonsense')).toThrow(/--server: must be host:port/);
  });

  it('resolves the names of a list into one address list, counting the replicas', async () => {
    const { servers, replicas } = await resolveServers(parseServers('localhost:7001,127.0.0.2:7002'));
    expect(servers.target).toBe('ipv4:127.0.0.1:7001,127.0.0.2:7002');
    expect(replicas).toBe(2);
  });
});

describe('--shard', () => {
  it('parses i/N and refuses an index outside [0, N)', () => {
    expect(parseShard('2/5')).toEqual({ index: 2, count: 5 });
    for (const bad of ['5/5', '-1/3', '1', 'a/b', '0/0']) expect(() => parseShard(bad), bad).toThrow(/--shard: must be i\/N/);
  });

  it('N shards cover every point of a grid exactly once', () => {
    const grid = {
      example: 'bb84-entangled',
      baseParameters: { alpha: 1.5 },
      axes: [{ name: 'qber-x', values: [0.01, 0.02, 0.03, 0.04, 0.05, 0.06, 0.07] }],
      entropies: ['VON_NEUMANN' as const, 'PETZ_UP' as const],
    };
    const all = gridPoints(grid).map((p) => p.index);
    const shards = [0, 1, 2].map((index) => gridPoints(grid, { index, count: 3 }).map((p) => p.index));
    expect(shards.flat().sort((a, b) => a - b)).toEqual(all);
    expect(shards.every((s) => s.length >= 4)).toBe(true);
    expect(inShard(7, { index: 1, count: 3 })).toBe(true);
  });
});

describe('grid checked up front', () => {
  it('reports a misspelt axis once, naming the axis and the parameters the example has', () => {
    const grid = { example: 'bb84-entangled', axes: [{ name: 'qber-xx', values: [0.01, 0.02, 0.03] }], entropies: ['VON_NEUMANN' as const] };
    const expected = [...EXAMPLES['bb84-entangled'].parameters.map((p) => p.name), 'alpha'].join(', ');
    expect(() => gridPoints(grid)).toThrow(`grid.axes[0].name: "qber-xx" is not a parameter of bb84-entangled (expected ${expected})`);
    const base = { example: 'six-state', baseParameters: { qbr: 0.1 }, axes: [], entropies: ['VON_NEUMANN' as const] };
    expect(() => gridPoints(base)).toThrow(/^grid\.baseParameters\.qbr: is not a parameter of six-state/);
  });
});

describe('round plot ticks', () => {
  it('steps by 1, 2 or 5 times a power of ten and covers the data', () => {
    expect(roundTicks(0.005, 0.11)).toEqual([0, 0.02, 0.04, 0.06, 0.08, 0.1, 0.12]);
    expect(roundTicks(0.018, 0.026)).toEqual([0.018, 0.019, 0.02, 0.021, 0.022, 0.023, 0.024, 0.025, 0.026].filter((_, i) => i % 2 === 0));
    expect(roundTicks(1.25, 2)).toEqual([1.2, 1.4, 1.6, 1.8, 2]);
    expect(roundTicks(-0.3, 0.7)).toEqual([-0.4, -0.2, 0, 0.2, 0.4, 0.6, 0.8]);
    for (const [low, high] of [[0.0123, 0.9876], [3, 3], [1e-7, 3e-6]]) {
      const ticks = roundTicks(low, high);
      const step = ticks[1] - ticks[0];
      const mantissa = step / 10 ** Math.floor(Math.log10(step) + 1e-9);
      expect([1, 2, 5].some((m) => Math.abs(mantissa - m) < 1e-6), `step ${step}`).toBe(true);
      expect(ticks[0]).toBeLessThanOrEqual(low);
      expect(ticks.at(-1)).toBeGreaterThanOrEqual(high);
    }
  });
});

describe('remote failures on the command line', () => {
  it('a bad field stays a field error; a transport failure names the server', () => {
    const field = commandLineError(new RemoteCallError(grpc.status.INVALID_ARGUMENT, 'problem.dimensionA: must be ≥ 1', 'problem.dimensionA'), 'h:1');
    expect((field as Error).message).toBe('problem.dimensionA: must be ≥ 1');
    const down = commandLineError(
      { code: grpc.status.UNAVAILABLE, details: 'No connection established. Last error: connect ECONNREFUSED 127.0.0.1:1', metadata: new grpc.Metadata() },
      '127.0.0.1:1',
    );
    expect(down).toBeInstanceOf(ValidationError);
    expect((down as Error).message).toBe('127.0.0.1:1: unreachable (connect ECONNREFUSED 127.0.0.1:1)');
    const other = new Error('a bug');
    expect(commandLineError(other, 'x:1')).toBe(other);
  });

  it('counts as a replica failure what another replica may answer, and nothing the request caused', () => {
    const failure = (code: grpc.status, details = '') => isReplicaFailure(new RemoteCallError(code, details, undefined));
    expect(failure(grpc.status.UNAVAILABLE)).toBe(true);
    expect(failure(grpc.status.DEADLINE_EXCEEDED)).toBe(true);
    expect(failure(grpc.status.RESOURCE_EXHAUSTED)).toBe(true);
    expect(failure(grpc.status.INTERNAL, 'Received RST_STREAM with code 2 (Internal server error)')).toBe(true);
    expect(failure(grpc.status.INTERNAL, 'the solver failed')).toBe(false);
    expect(failure(grpc.status.INVALID_ARGUMENT)).toBe(false);
  });
});
