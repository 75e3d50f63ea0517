// Results survive the wire: solver result → SolveResult message → bytes → message → the same result.
import { describe, expect, it } from 'vitest';
import { randomModel } from '../../src/bench/random-models.js';
import { solve } from '../../src/frank-wolfe/solve.js';
import type { SolveResult } from '../../src/result/types.js';
import { problemFromJson } from '../../src/problem/validate.js';
import { buildExample } from '../../src/protocols/index.js';
import type { SolveReply__Output } from '../../src/service/generated/renyibound/v1/SolveReply.js';
import { loadServicePackage } from '../../src/service/proto.js';
import { entropyKindFromWire, entropyKindToWire, resultFromWire, resultToWire, wireToJson } from '../../src/service/wire.js';

function roundTrip(result: SolveResult, fromCache: boolean): SolveResult & { fromCache: boolean } {
  const method = loadServicePackage().renyibound.v1.RenyiBound.service.Solve;
  const bytes = method.responseSerialize({ result: resultToWire(result, fromCache), requestId: 'x' });
  const decoded = method.responseDeserialize(bytes) as SolveReply__Output;
  return resultFromWire(decoded.result!);
}

describe('wire conversion', () => {
  it('round-trips certified, limited and infeasible results exactly', () => {
    const problem = problemFromJson(buildExample('bb84-entangled', { 'qber-x': 0.03 }));
    const certified = solve(problem, { kind: 'petz-up', alpha: 1.7 }, { gapTolerance: 1e-4 });
    expect(roundTrip(certified, true)).toEqual({ ...certified, fromCache: true });
    const limited = solve(problem, { kind: 'von-neumann' }, { gapTolerance: 1e-12, maxIterations: 3 });
    expect(limited.status).toBe('LIMIT_REACHED');
    expect(roundTrip(limited, false)).toEqual({ ...limited, fromCache: false });
    const infeasible = solve(problemFromJson(buildExample('chsh-tested', { 'win-probability': 0.9 })), { kind: 'von-neumann' });
    expect(infeasible.status).toBe('INFEASIBLE');
    expect(roundTrip(infeasible, false)).toEqual({ ...infeasible, fromCache: false });
  });

  it('round-trips a certificate lifted off an exposed face (faceExposures, linearizationOffFace)', () => {
    const model = randomModel(16, 2);
    const lifted = solve(model.problem, { kind: 'von-neumann' }, { gapTolerance: 1e-6 });
    expect(lifted.certificate?.linearizationOffFace).toBe(true);
    expect(roundTrip(lifted, false)).toEqual({ ...lifted, fromCache: false });
  });

  it('maps entropy kinds both ways and leaves UNSPECIFIED to the problem', () => {
    for (const kind of ['von-neumann', 'petz-up', 'petz-down', 'sandwiched-up']) {
      expect(entropyKindFromWire(entropyKindToWire(kind))).toBe(kind);
    }
    expect(entropyKindFromWire('ENTROPY_KIND_UNSPECIFIED')).toBeUndefined();
  });

  it('strips proto-loader artefacts (virtual oneof markers, unset messages, unspecified enums)', () => {
    expect(wireToJson({ alpha: 1.5, _alpha: 'alpha', sourceMarginal: null, entropy: 'ENTROPY_KIND_UNSPECIFIED', branches: [{ score: 0 }] })).toEqual({
      alpha: 1.5,
      branches: [{ score: 0 }],
    });
  });
});
