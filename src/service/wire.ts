// Translation between the protobuf messages (as proto-loader decodes them) and the solver's own types.
import type { Certificate, FarkasCertificate, MatrixJson, NoProgressCause, SolveResult, StopLimit } from '../result/types.js';
import type { SolverSettings } from '../frank-wolfe/settings.js';
import type { EntropyKind } from '../problem/model.js';
import { ENTROPY_ENUM_NAMES, isUnspecifiedEntropy, UNSPECIFIED_ENTROPY_ENUM, entropyKindFrom } from '../problem/entropy-request.js';
import type { Certificate as WireCertificate, Certificate__Output } from './generated/renyibound/v1/Certificate.js';
import type { EntropyKind__Output } from './generated/renyibound/v1/EntropyKind.js';
import type { Matrix, Matrix__Output } from './generated/renyibound/v1/Matrix.js';
import type { SolveResult as WireSolveResult, SolveResult__Output } from './generated/renyibound/v1/SolveResult.js';
import type { SolverSettings as WireSolverSettings, SolverSettings__Output } from './generated/renyibound/v1/SolverSettings.js';
import type { StopLimit__Output } from './generated/renyibound/v1/StopLimit.js';
import type { NoProgressCause__Output } from './generated/renyibound/v1/NoProgressCause.js';
import type { InfeasibilityCertificate__Output } from './generated/renyibound/v1/InfeasibilityCertificate.js';

/** A result as delivered by the service: the solver's result plus whether it came from the cache. */
export type DeliveredResult = SolveResult & { fromCache: boolean };

/** 'von-neumann' → 'VON_NEUMANN'. */
export function entropyKindToWire(kind: string): EntropyKind__Output {
  const name = ENTROPY_ENUM_NAMES[kind as EntropyKind];
  return (name ?? UNSPECIFIED_ENTROPY_ENUM) as EntropyKind__Output;
}

/** 'VON_NEUMANN' → 'von-neumann'; undefined for ENTROPY_KIND_UNSPECIFIED (the caller falls back to the problem's kind). */
export function entropyKindFromWire(name: string | number | undefined): EntropyKind | undefined {
  if (isUnspecifiedEntropy(name)) return undefined;
  try {
    return entropyKindFrom(name);
  } catch {
    return undefined;
  }
}

const LIMIT_TO_WIRE: Record<StopLimit, StopLimit__Output> = {
  iterations: 'STOP_LIMIT_ITERATIONS',
  time: 'STOP_LIMIT_TIME',
  cancelled: 'STOP_LIMIT_CANCELLED',
  'no-progress': 'STOP_LIMIT_NO_PROGRESS',
};

const CAUSE_TO_WIRE: Record<NoProgressCause, NoProgressCause__Output> = {
  margin: 'NO_PROGRESS_CAUSE_MARGIN',
  'oracle-accuracy': 'NO_PROGRESS_CAUSE_ORACLE_ACCURACY',
};

function causeFromWire(name: NoProgressCause__Output): NoProgressCause | undefined {
  for (const [cause, wire] of Object.entries(CAUSE_TO_WIRE)) if (wire === name) return cause as NoProgressCause;
  return undefined;
}

function limitFromWire(name: StopLimit__Output): StopLimit | undefined {
  for (const [limit, wire] of Object.entries(LIMIT_TO_WIRE)) if (wire === name) return limit as StopLimit;
  return undefined;
}

/**
 * A decoded message as protobuf JSON: drops proto-loader's virtual oneof markers ("_alpha": "alpha"), unset
 * message fields (null) and unspecified enums, which the strict JSON readers would otherwise reject.
 */
export function wireToJson(value: unknown): unknown {
  if (Array.isArray(value)) return value.map(wireToJson);
  if (value === null || typeof value !== 'object') return value;
  const out: Record<string, unknown> = {};
  for (const [key, field] of Object.entries(value as Record<string, unknown>)) {
    if (field === null || field === undefined) continue;
    if (key.startsWith('_') && field === key.slice(1)) continue;
    if (typeof field === 'string' && field.endsWith('_UNSPECIFIED')) continue;
    out[key] = wireToJson(field);
  }
  return out;
}

export function matrixToWire(matrix: MatrixJson): Matrix {
  return { rows: matrix.rows, cols: matrix.cols, re: matrix.re, im: matrix.im ?? [] };
}

export function matrixFromWire(matrix: Matrix__Output): MatrixJson {
  const json: MatrixJson = { rows: matrix.rows, cols: matrix.cols, re: [...matrix.re] };
  if (matrix.im.length > 0) json.im = [...matrix.im];
  return json;
}

/** Unset (0) fields are left out, so the server's defaults apply. */
export function settingsFromWire(settings: SolverSettings__Output | null | undefined): Partial<SolverSettings> {
  const out: Partial<SolverSettings> = {};
  if (!settings) return out;
  if (settings.gapTolerance !== 0) out.gapTolerance = settings.gapTolerance;
  if (settings.maxIterations !== 0) out.maxIterations = settings.maxIterations;
  if (settings.timeLimitMs !== 0) out.timeLimitMs = settings.timeLimitMs;
  return out;
}

export function settingsToWire(settings: Partial<SolverSettings>): WireSolverSettings {
  return {
    gapTolerance: settings.gapTolerance ?? 0,
    maxIterations: settings.maxIterations ?? 0,
    timeLimitMs: settings.timeLimitMs ?? 0,
  };
}

function optionalNumber(value: number | null | undefined): number | undefined {
  return value === null || value === undefined ? undefined : value;
}

function certificateToWire(certificate: Certificate): WireCertificate {
  return {
    inputHash: certificate.inputHash,
    entropy: entropyKindToWire(certificate.entropy),
    alpha: optionalNumber(certificate.alpha),
    linearizationState: matrixToWire(certificate.linearizationState),
    referenceStates: (certificate.referenceStates ?? []).map(matrixToWire),
    multipliersLower: certificate.multipliersLower,
    multipliersUpper: certificate.multipliersUpper,
    claimedBound: certificate.claimedBound,
    toleranceMargin: certificate.toleranceMargin,
    solverVersion: certificate.solverVersion,
    settings: settingsToWire(certificate.settings),
    faceExposures: (certificate.faceExposures ?? []).map((e) => ({ multipliers: e.multipliers })),
    linearizationOffFace: certificate.linearizationOffFace === true,
  };
}

function certificateFromWire(wire: Certificate__Output): Certificate {
  const certificate: Certificate = {
    inputHash: wire.inputHash,
    entropy: entropyKindFromWire(wire.entropy) ?? '',
    alpha: wire.alpha ?? null,
    linearizationState: matrixFromWire(wire.linearizationState ?? { rows: 0, cols: 0, re: [], im: [] }),
    multipliersLower: [...wire.multipliersLower],
    multipliersUpper: [...wire.multipliersUpper],
    claimedBound: wire.claimedBound,
    toleranceMargin: wire.toleranceMargin,
    solverVersion: wire.solverVersion,
    settings: { gapTolerance: wire.settings?.gapTolerance ?? 0, maxIterations: wire.settings?.maxIterations ?? 0 },
  };
  if (wire.referenceStates.length > 0) certificate.referenceStates = wire.referenceStates.map(matrixFromWire);
  if (wire.faceExposures.length > 0) certificate.faceExposures = wire.faceExposures.map((e) => ({ multipliers: [...e.multipliers] }));
  if (wire.linearizationOffFace) certificate.linearizationOffFace = true;
  return certificate;
}

function infeasibilityFromWire(wire: InfeasibilityCertificate__Output): FarkasCertificate {
  return {
    multipliersLower: [...wire.multipliersLower],
    multipliersUpper: [...wire.multipliersUpper],
    violation: wire.violation,
    dominantConstraints: [...wire.dominantConstraints],
  };
}

export function resultToWire(result: SolveResult, fromCache: boolean): WireSolveResult {
  return {
    status: result.status,
    limit: result.limit === undefined ? 'STOP_LIMIT_UNSPECIFIED' : LIMIT_TO_WIRE[result.limit],
    noProgressCause: result.noProgressCause === undefined ? 'NO_PROGRESS_CAUSE_UNSPECIFIED' : CAUSE_TO_WIRE[result.noProgressCause],
    message: result.message ?? '',
    entropy: entropyKindToWire(result.entropy),
    alpha: optionalNumber(result.alpha),
    certifiedLowerBound: optionalNumber(result.certifiedLowerBound),
    upperBound: optionalNumber(result.upperBound),
    gap: optionalNumber(result.gap),
    toleranceMargin: optionalNumber(result.toleranceMargin),
    statisticalSlack: optionalNumber(result.statisticalSlack),
    maxConstraintViolation: optionalNumber(result.maxConstraintViolation),
    iterations: result.iterations,
    seconds: result.seconds,
    oracleSeconds: result.oracleSeconds,
    inputHash: result.inputHash,
    certificate: result.certificate === null ? null : certificateToWire(result.certificate),
    infeasibility: result.infeasibility ?? null,
    finalState: result.finalState === undefined ? null : matrixToWire(result.finalState),
    fromCache,
    relativeConstraintViolation: optionalNumber(result.relativeConstraintViolation),
    feasibilityTolerance: result.feasibilityTolerance ?? 0,
    trivialBound: result.trivialBound ?? 0,
    trivialBoundUsed: result.trivialBoundUsed ?? false,
    notes: result.notes ?? [],
    minTradeoff: result.minTradeoff ?? null,
  };
}

function nullable(value: number | undefined): number | null {
  return value === undefined ? null : value;
}

/** The solver's result shape (as the command line prints it) from a decoded SolveResult message. */
export function resultFromWire(wire: SolveResult__Output): DeliveredResult {
  const result: DeliveredResult = {
    status: wire.status === 'SOLVE_STATUS_UNSPECIFIED' ? 'NUMERICAL_ERROR' : wire.status,
    entropy: entropyKindFromWire(wire.entropy) ?? '',
    alpha: nullable(wire.alpha),
    certifiedLowerBound: nullable(wire.certifiedLowerBound),
    upperBound: nullable(wire.upperBound),
    gap: nullable(wire.gap),
    toleranceMargin: nullable(wire.toleranceMargin),
    statisticalSlack: nullable(wire.statisticalSlack),
    maxConstraintViolation: nullable(wire.maxConstraintViolation),
    iterations: wire.iterations,
    seconds: wire.seconds,
    oracleSeconds: wire.oracleSeconds,
    inputHash: wire.inputHash,
    certificate: wire.certificate === null ? null : certificateFromWire(wire.certificate),
    fromCache: wire.fromCache,
  };
  const limit = limitFromWire(wire.limit);
  if (limit !== undefined) result.limit = limit;
  const cause = causeFromWire(wire.noProgressCause);
  if (cause !== undefined) result.noProgressCause = cause;
  if (wire.message !== '') result.message = wire.message;
  if (wire.infeasibility !== null) result.infeasibility = infeasibilityFromWire(wire.infeasibility);
  if (wire.finalState !== null) result.finalState = matrixFromWire(wire.finalState);
  if (wire.relativeConstraintViolation != null) result.relativeConstraintViolation = wire.relativeConstraintViolation;
  if (wire.feasibilityTolerance !== 0) result.feasibilityTolerance = wire.feasibilityTolerance;
  if (wire.status === 'CERTIFIED' || wire.status === 'LIMIT_REACHED') {
    result.trivialBound = wire.trivialBound;
    result.trivialBoundUsed = wire.trivialBoundUsed;
  }
  if (wire.notes.length > 0) result.notes = [...wire.notes];
  if (wire.minTradeoff !== null) result.minTradeoff = { ...wire.minTradeoff, coefficients: wire.minTradeoff.coefficients.map((c) => ({ ...c })) };
  return result;
}
