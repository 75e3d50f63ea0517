// Malformed requests for the wire fuzz: valid example problems with one to three mutations that each make the
// request invalid (and say which field path the server should blame), plus raw bytes that are no message at all.
// Shared by test/service/wire-fuzz.test.ts (≥ 500 cases) and the longer run `npm run fuzz:wire`.
import * as grpc from '@grpc/grpc-js';
import fc from 'fast-check';
import { buildExample } from '../../src/protocols/index.js';
import { FIELD_METADATA_KEY } from '../../src/service/errors.js';
import { SERVICE_NAME } from '../../src/service/proto.js';

type Json = any; // eslint-disable-line @typescript-eslint/no-explicit-any

/** A request in the loader's object form (lowerCamelCase, enums by name) and the field prefixes it may be blamed on. */
export interface MalformedRequest {
  request: Json;
  /** The server's field path must start with one of these. */
  blame: string[];
}

const BASES: { problem: Json; entropy: string; alpha?: number }[] = [
  { problem: buildExample('bb84-entangled', { 'qber-z': 0.02, 'qber-x': 0.04 }), entropy: 'VON_NEUMANN' },
  { problem: buildExample('six-state', { qber: 0.03 }), entropy: 'PETZ_UP', alpha: 1.5 },
  { problem: buildExample('chsh-tested', { 'win-probability': 0.84 }), entropy: 'SANDWICHED_UP', alpha: 1.25 },
  { problem: buildExample('bb84-prepare-measure', { qber: 0.02, transmittance: 0.5 }), entropy: 'PETZ_DOWN', alpha: 1.8 },
];

/** Every matrix of a problem with its field path, the path of the list it belongs to, and what it must be. */
interface MatrixSite {
  path: string;
  parent: string;
  /** Hermitian operators (constraints, POVM elements, marginal, key projectors); Kraus operators need not be. */
  hermitian: boolean;
  get(problem: Json): Json;
}

function matrixSites(problem: Json): MatrixSite[] {
  const sites: MatrixSite[] = [];
  if (problem.sourceMarginal) sites.push({ path: 'problem.sourceMarginal', parent: 'problem.sourceMarginal', hermitian: true, get: (p) => p.sourceMarginal });
  (problem.constraints ?? []).forEach((_: Json, i: number) =>
    sites.push({ path: `problem.constraints[${i}].operator`, parent: `problem.constraints[${i}]`, hermitian: true, get: (p) => p.constraints[i].operator }),
  );
  (problem.observations ?? []).forEach((o: Json, i: number) => {
    for (const side of ['povmA', 'povmB'] as const) {
      (o[side] ?? []).forEach((_: Json, k: number) =>
        sites.push({ path: `problem.observations[${i}].${side}[${k}]`, parent: `problem.observations[${i}]`, hermitian: true, get: (p) => p.observations[i][side][k] }),
      );
    }
  });
  (problem.branches ?? []).forEach((b: Json, i: number) => {
    (b.krausOperators ?? []).forEach((_: Json, k: number) =>
      // A changed Kraus operator breaks completeness, which is blamed on the branch list as a whole.
      sites.push({ path: `problem.branches[${i}].krausOperators[${k}]`, parent: 'problem.branches', hermitian: false, get: (p) => p.branches[i].krausOperators[k] }),
    );
    (b.keyProjectors ?? []).forEach((_: Json, k: number) =>
      sites.push({ path: `problem.branches[${i}].keyProjectors[${k}]`, parent: `problem.branches[${i}]`, hermitian: true, get: (p) => p.branches[i].keyProjectors[k] }),
    );
  });
  return sites;
}

/** A mutation: picks its target from the request with the given random choices, changes it, returns the blame. */
type Mutation = (request: Json, pick: (n: number) => number) => string;

/** d_A·d_B for building operators, bounded (a dimension mutation may have made it absurd; the request is bad anyway). */
const stateDimension = (problem: Json): number => Math.min(problem.dimensionA * problem.dimensionB, 64) || 4;

const NON_FINITE = [Number.NaN, Number.POSITIVE_INFINITY, Number.NEGATIVE_INFINITY];

const pickSite = (request: Json, pick: (n: number) => number): MatrixSite | undefined => {
  const sites = matrixSites(request.problem);
  return sites.length === 0 ? undefined : sites[pick(sites.length)];
};

/** When an earlier mutation removed every matrix, a request-level mutation stands in. */
const withSite = (mutate: (site: MatrixSite, matrix: Json, request: Json, pick: (n: number) => number) => string): Mutation => (request, pick) => {
  const site = pickSite(request, pick);
  return site === undefined ? MUTATIONS.order(request, pick) : mutate(site, site.get(request.problem), request, pick);
};

const MUTATIONS: Record<string, Mutation> = {
  nonFiniteEntry: withSite((site, matrix, request, pick) => {
    const part = pick(2) === 0 ? 're' : 'im';
    // Sizes from the entries, not from rows/cols (an earlier mutation may have made those absurd).
    if (!matrix[part] || matrix[part].length === 0) matrix[part] = new Array(Math.max(matrix.re.length, 1)).fill(0);
    matrix[part][pick(matrix[part].length)] = NON_FINITE[pick(3)];
    return site.path;
  }),
  wrongLength: withSite((site, matrix, request, pick) => {
    if (pick(2) === 0 && matrix.re.length > 0) matrix.re.pop();
    else matrix.re.push(0.5);
    return site.path;
  }),
  wrongShape: withSite((site, matrix, request, pick) => {
    const key = pick(2) === 0 ? 'rows' : 'cols';
    matrix[key] = [0, matrix[key] + 1, 2 ** 31, 4294967295][pick(4)];
    return site.path;
  }),
  offDiagonal: withSite((site, matrix, request, pick) => {
    // Breaks Hermiticity (or projector / POVM / completeness properties) by a clearly non-rounding amount.
    const n = Math.max(Math.round(Math.sqrt(matrix.re.length)), 2);
    const i = pick(n);
    const j = (i + 1 + pick(n - 1)) % n;
    matrix.re[i * n + j] += [0.05, -0.3, 2, 1e6][pick(4)];
    return site.hermitian ? site.path : site.parent;
  }),
  dimension: (request, pick) => {
    const key = pick(2) === 0 ? 'dimensionA' : 'dimensionB';
    const old = request.problem[key];
    request.problem[key] = [0, old + 1, old === 1 ? 2 : old - 1, 257, 4294967295][pick(5)];
    return 'problem';
  },
  interval: (request, pick) => {
    const problem = request.problem;
    if (!problem.constraints?.length) {
      const d = stateDimension(problem);
      const identity = { rows: d, cols: d, re: Array.from({ length: d * d }, (_, k) => (k % (d + 1) === 0 ? 1 : 0)) };
      problem.constraints = [{ label: 'trace', operator: identity, lower: 1, upper: 1 }];
    }
    const i = pick(problem.constraints.length);
    const constraint = problem.constraints[i];
    const choice = pick(3);
    if (choice === 0) constraint.lower = (constraint.upper ?? 0) + [1e-3, 1, 1e9][pick(3)];
    else if (choice === 1) constraint.lower = NON_FINITE[pick(3)];
    else constraint.upper = NON_FINITE[pick(3)];
    return `problem.constraints[${i}]`;
  },
  statistics: (request, pick) => {
    const problem = request.problem;
    if (!problem.observations?.length) return MUTATIONS.interval(request, pick);
    const i = pick(problem.observations.length);
    const observation = problem.observations[i];
    const choice = pick(4);
    if (choice === 0) observation.probabilities[pick(observation.probabilities.length)] = [-0.1, Number.NaN, 2][pick(3)];
    else if (choice === 1) observation.probabilities.pop();
    else if (choice === 2) observation.tolerance = [-1e-3, Number.NaN, Number.NEGATIVE_INFINITY][pick(3)];
    else observation.povmB = observation.povmB.slice(0, 1);
    return `problem.observations[${i}]`;
  },
  branches: (request, pick) => {
    const problem = request.problem;
    const choice = problem.branches?.length ? pick(3) : 0;
    if (choice === 0) problem.branches = [];
    else if (choice === 1) problem.branches.pop();
    else {
      const branch = problem.branches[pick(problem.branches.length)];
      branch.keyProjectors = branch.keyProjectors.slice(1);
      if (branch.keyProjectors.length === 0) branch.krausOperators = [];
    }
    return 'problem.branches';
  },
  order: (request, pick) => {
    request.entropy = ['PETZ_UP', 'PETZ_DOWN', 'SANDWICHED_UP'][pick(3)];
    request.alpha = [1, 0.5, 2.5, -1, Number.NaN, Number.POSITIVE_INFINITY, 1e300][pick(7)];
    return 'alpha';
  },
  entropyKind: (request, pick) => {
    // An enum number no kind has, or no kind at all when the problem names none either.
    request.entropy = [17, 'ENTROPY_KIND_UNSPECIFIED', -3][pick(3)];
    delete request.problem.entropy;
    return 'entropy';
  },
  settings: (request, pick) => {
    // uint32 fields on the wire: 0 means "not set" (the default applies), so only values above the range are wrong.
    const choice = pick(3);
    if (choice === 0) request.settings = { gapTolerance: [-1, -1e-9, Number.NaN, Number.POSITIVE_INFINITY, 2, 1e-13][pick(6)] };
    else if (choice === 1) request.settings = { maxIterations: [10_000_001, 4294967295][pick(2)] };
    else request.settings = { timeLimitMs: [86_400_001, 4294967295][pick(2)] };
    return 'settings';
  },
  warmStart: (request, pick) => {
    const d = stateDimension(request.problem);
    const choice = pick(3);
    if (choice === 0) request.warmStart = { rows: d + 1, cols: d + 1, re: new Array((d + 1) * (d + 1)).fill(1 / (d + 1)) };
    else if (choice === 1) request.warmStart = { rows: d, cols: d, re: Array.from({ length: d * d }, (_, k) => (k === 0 ? Number.NaN : 0)) };
    else request.warmStart = { rows: d, cols: d, re: Array.from({ length: d * d }, (_, k) => (k === 0 ? 2 : k === d * d - 1 ? -1 : 0)) };
    return 'warmStart';
  },
  noProblem: (request) => {
    request.problem = null;
    return 'problem';
  },
};

/** Mutations that replace the problem wholesale, after which no other mutation has anything to act on. */
const TERMINAL = new Set(['noProblem']);

export const malformedRequest: fc.Arbitrary<MalformedRequest> = fc
  .record({
    base: fc.nat(BASES.length - 1),
    // Distinct kinds: the same kind twice could undo itself (a dimension +1 then −1, an entry added then removed).
    mutations: fc.uniqueArray(fc.constantFrom(...Object.keys(MUTATIONS)), { minLength: 1, maxLength: 3 }),
    choices: fc.array(fc.nat(1_000_000), { minLength: 64, maxLength: 64 }),
  })
  .map(({ base, mutations, choices }) => {
    const { problem, entropy, alpha } = BASES[base];
    const request: Json = { problem: structuredClone(problem), entropy, alpha, requestId: 'fuzz' };
    let next = 0;
    const pick = (n: number) => (n <= 0 ? 0 : choices[next++ % choices.length] % n);
    const blame: string[] = [];
    for (const name of mutations) {
      if (request.problem === null) break;
      blame.push(MUTATIONS[name](request, pick));
      if (TERMINAL.has(name)) break;
    }
    return { request, blame };
  });

/** Bytes that are not a SolveRequest: noise, and tag/wire-type sequences with the wrong kinds of payload. */
export const garbageBytes: fc.Arbitrary<Uint8Array> = fc.oneof(
  fc.uint8Array({ minLength: 1, maxLength: 512 }),
  fc
    .array(
      fc.record({ field: fc.integer({ min: 1, max: 12 }), wireType: fc.integer({ min: 0, max: 7 }), payload: fc.uint8Array({ maxLength: 24 }) }),
      { minLength: 1, maxLength: 8 },
    )
    .map((parts) => Uint8Array.from(parts.flatMap(({ field, wireType, payload }) => [(field << 3) | wireType, payload.length, ...payload]))),
);

/** How one call ended. */
export interface Reply {
  code: grpc.status;
  details: string;
  field: string | undefined;
}

/** A client that sends bytes as they are (no protobuf encoding), for requests no encoder would produce. */
export class RawClient {
  private readonly client: grpc.Client;

  constructor(address: string) {
    this.client = new grpc.Client(address, grpc.credentials.createInsecure());
  }

  call(method: string, body: Buffer, deadlineMs = 20_000): Promise<Reply> {
    return new Promise((resolve) => {
      this.client.makeUnaryRequest(
        `/${SERVICE_NAME}/${method}`,
        (bytes: Buffer) => bytes,
        (bytes: Buffer) => bytes,
        body,
        new grpc.Metadata(),
        { deadline: new Date(Date.now() + deadlineMs) },
        (error) => {
          const field = error?.metadata?.get(FIELD_METADATA_KEY)[0];
          resolve({ code: error?.code ?? grpc.status.OK, details: error?.details ?? '', field: typeof field === 'string' ? field : undefined });
        },
      );
    });
  }

  close(): void {
    this.client.close();
  }
}

/** What the server must answer to a malformed request: INVALID_ARGUMENT, the field path in metadata and message. */
export function badRequestProblem(reply: Reply, blame?: string[]): string | undefined {
  if (reply.code !== grpc.status.INVALID_ARGUMENT) return `expected INVALID_ARGUMENT, got ${grpc.status[reply.code]}: ${reply.details}`;
  if (!reply.field) return `no ${FIELD_METADATA_KEY} metadata (details: ${reply.details})`;
  if (!reply.details.startsWith(`${reply.field}: `)) return `the message does not start with the field path ${reply.field}: ${reply.details}`;
  if (blame && !blame.some((prefix) => reply.field === prefix || reply.field!.startsWith(`${prefix}.`) || reply.field!.startsWith(`${prefix}[`))) {
    return `blamed ${reply.field}, expected one of ${blame.join(', ')} (${reply.details})`;
  }
  return undefined;
}
