// Field presence of a constraint's bounds survives the protobuf encoding the service uses: an omitted bound is
// no bound (−∞/+∞ after validation), an explicit 0 stays 0.
import { describe, expect, it } from 'vitest';
import { buildExample } from '../../src/protocols/index.js';
import { problemFromJson } from '../../src/problem/validate.js';
import { loadServicePackage } from '../../src/service/proto.js';
import { wireToJson } from '../../src/service/wire.js';

function throughWire(problem: unknown): unknown {
  const method = loadServicePackage().renyibound.v1.RenyiBound.service.Solve;
  const bytes = method.requestSerialize({ problem });
  return wireToJson((method.requestDeserialize(bytes) as { problem: unknown }).problem);
}

describe('one-sided constraints on the wire', () => {
  it('an omitted lower bound arrives as absent, an explicit 0 as 0', () => {
    // eslint-disable-next-line @typescript-eslint/no-explicit-any
    const json = structuredClone(buildExample('bb84-entangled', {})) as any;
    delete json.constraints[0].lower;
    json.constraints[1].lower = 0;
    const problem = problemFromJson(throughWire(json));
    expect(problem.constraints[0].lower).toBe(-Infinity);
    expect(problem.constraints[0].upper).toBe(json.constraints[0].upper);
    expect(problem.constraints[1].lower).toBe(0);
  });
});
