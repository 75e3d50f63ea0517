// The KeyLength RPCs: validate the request, run the finite-size search with every single-round solve going
// through the server's coordinator (cache by input hash → pool), and answer the ledger (docs/finite-size.md);
// KeyLengthStream also streams progress after every single-round solve.
import type * as grpc from '@grpc/grpc-js';
import { keyLength, type KeyLengthOptions, type KeyLengthReport, type SolveProgress } from '../finite-size/key-length.js';
import type { SearchProgress } from '../finite-size/optimise.js';
import { problemToJson, type SingleRoundSolver } from '../finite-size/single-round.js';
import { matrixToJson } from '../problem/json.js';
import type { Problem } from '../problem/model.js';
import { ValidationError } from '../problem/errors.js';
import { parseProblemJson } from '../problem/validate.js';
import { toServiceError } from './errors.js';
import type { KeyLengthReply } from './generated/renyibound/v1/KeyLengthReply.js';
import type { KeyLengthRequest__Output } from './generated/renyibound/v1/KeyLengthRequest.js';
import type { KeyLengthProgress } from './generated/renyibound/v1/KeyLengthProgress.js';
import type { KeyLengthStreamItem } from './generated/renyibound/v1/KeyLengthStreamItem.js';
import { prepareSolve } from './prepare.js';
import type { SolveCoordinator } from './solve-coordinator.js';
import { wireToJson } from './wire.js';

/** Single-round solves through the coordinator, so repeated searches are answered from the cache. */
function coordinatedSolver(coordinator: SolveCoordinator, signal: AbortSignal | undefined, requestId: string): SingleRoundSolver {
  return async (problem, request, settings, warmStart) => {
    // A cancelled call stops the search instead of finishing it on cancelled (loose) solves.
    if (signal?.aborted) throw new Error('key-length search cancelled by the client');
    const prepared = prepareSolve({
      problemJson: problemToJson(problem),
      entropy: request.kind,
      alpha: request.alpha,
      settings,
      warmStart: warmStart ? matrixToJson(warmStart) : undefined,
    });
    return coordinator.solve(prepared, { signal, requestId });
  };
}

function optionalNumber(value: number | undefined, present: boolean): number | undefined {
  return present ? value : undefined;
}

export function reportToWire(report: KeyLengthReport, requestId: string): KeyLengthReply {
  const reply: KeyLengthReply = {
    keyLength: report.keyLength,
    ratePerRound: report.ratePerRound,
    rounds: report.rounds,
    alpha: report.alpha,
    scores: report.scores,
    singleRoundBoundJson: JSON.stringify(report.singleRoundBound),
    singleRoundProblem: report.singleRoundProblem as never,
    terms: report.terms,
    epsilons: report.epsilons,
    acceptanceWindow: {
      meanScore: report.acceptanceWindow.meanScore,
      deviation: report.acceptanceWindow.deviation,
      minimumScoreSum: report.acceptanceWindow.minimumScoreSum,
      tail: report.acceptanceWindow.tail,
    },
    errorCorrectionBits: report.errorCorrection.bits,
    singleRoundSolves: report.search.singleRoundSolves,
    requestId,
    entropy: report.entropy,
  };
  if (report.variableLength) {
    reply.variableLength = {
      intercept: report.variableLength.intercept,
      keyLengthAtHonestMean: report.variableLength.keyLengthAtHonestMean,
    };
  }
  const asymptotic = report.asymptotic;
  if (asymptotic?.ratePerRound !== null && asymptotic?.ratePerRound !== undefined) reply.asymptoticRatePerRound = asymptotic.ratePerRound;
  if (asymptotic?.minTradeoff) {
    reply.minTradeoff = asymptotic.minTradeoff;
  }
  return reply;
}

/** The search a KeyLength request asks for, its single-round solves through the coordinator. */
async function runKeyLength(
  request: KeyLengthRequest__Output,
  coordinator: SolveCoordinator,
  signal: AbortSignal,
  listeners: Pick<KeyLengthOptions, 'onProgress' | 'onSolve'> = {},
): Promise<KeyLengthReport> {
  if (request.problem === null) throw new ValidationError('problem', 'is required');
  let problem: Problem;
  try {
    problem = parseProblemJson(wireToJson(request.problem)).problem;
  } catch (error) {
    if (error instanceof ValidationError) throw new ValidationError(`problem.${error.field}`, error.reason);
    throw error;
  }
  const has = (field: string) => (request as unknown as Record<string, unknown>)[`_${field}`] === field;
  return keyLength(
    problem,
    {
      rounds: request.rounds,
      epsilonSecrecy: optionalNumber(request.epsilonSecrecy, has('epsilonSecrecy')),
      epsilonCompleteness: optionalNumber(request.epsilonCompleteness, has('epsilonCompleteness')),
      epsilonPrivacyAmplification: optionalNumber(request.epsilonPrivacyAmplification, has('epsilonPrivacyAmplification')),
      epsilonErrorVerification: optionalNumber(request.epsilonErrorVerification, has('epsilonErrorVerification')),
      ecEfficiency: optionalNumber(request.ecEfficiency, has('ecEfficiency')),
      errorCorrectionBits: optionalNumber(request.errorCorrectionBits, has('errorCorrectionBits')),
      alpha: optionalNumber(request.alpha, has('alpha')),
      variableLength: request.variableLength,
      entropy: request.fast ? 'petz-up' : 'sandwiched-up',
      ...listeners,
    },
    coordinatedSolver(coordinator, signal, request.requestId),
  );
}

/** An AbortController aborted when the call is cancelled, and the listener's removal. */
function cancellation(call: { on(event: 'cancelled', listener: () => void): unknown; removeListener(event: 'cancelled', listener: () => void): unknown }) {
  const controller = new AbortController();
  const abort = () => controller.abort('cancelled');
  call.on('cancelled', abort);
  return { signal: controller.signal, release: () => call.removeListener('cancelled', abort) };
}

/** Unary KeyLength handler; bad input answers INVALID_ARGUMENT with the field path. */
export async function handleKeyLength(
  call: grpc.ServerUnaryCall<KeyLengthRequest__Output, KeyLengthReply>,
  callback: grpc.sendUnaryData<KeyLengthReply>,
  coordinator: SolveCoordinator,
): Promise<void> {
  const { signal, release } = cancellation(call);
  try {
    const report = await runKeyLength(call.request, coordinator, signal);
    callback(null, reportToWire(report, call.request.requestId));
  } catch (error) {
    callback(toServiceError(error));
  } finally {
    release();
  }
}

/**
 * Streaming KeyLength handler: a progress message after every single-round solve (phase, solves so far, the
 * solve's α and certified bound, the best rate of the finished ascents), then the reply. Bad input ends the
 * stream with INVALID_ARGUMENT naming the field, before any message.
 */
export async function handleKeyLengthStream(
  call: grpc.ServerWritableStream<KeyLengthRequest__Output, KeyLengthStreamItem>,
  coordinator: SolveCoordinator,
): Promise<void> {
  const { signal, release } = cancellation(call);
  const started = performance.now();
  let solves = 0;
  let best: SearchProgress | null = null;
  const onProgress = (progress: SearchProgress) => {
    if (best === null || progress.ratePerRound > best.ratePerRound) best = progress;
  };
  const onSolve = (solved: SolveProgress) => {
    solves++;
    if (signal.aborted) return;
    const progress: KeyLengthProgress = { phase: solved.phase, singleRoundSolves: solves, seconds: (performance.now() - started) / 1000 };
    if (solved.alpha !== null) progress.alpha = solved.alpha;
    if (solved.result.certifiedLowerBound !== null) progress.singleRoundBound = solved.result.certifiedLowerBound;
    const leader = best as SearchProgress | null;
    if (leader !== null) {
      progress.bestRatePerRound = leader.ratePerRound;
      progress.bestAlpha = leader.alpha;
    }
    call.write({ progress });
  };
  try {
    const report = await runKeyLength(call.request, coordinator, signal, { onProgress, onSolve });
    if (signal.aborted) return;
    call.write({ reply: reportToWire(report, call.request.requestId) });
    call.end();
  } catch (error) {
    if (!signal.aborted) call.emit('error', toServiceError(error));
  } finally {
    release();
  }
}
