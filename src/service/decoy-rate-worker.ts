// Worker thread of the DecoyRate RPC (run by piscina): the wire request mapped onto the same request
// `renyi-bound decoy-rate` builds, the same answer returned as typed summary fields plus the full JSON
// (docs/decoy.md). Errors come back as data.
import { formatJson } from '../cli/io.js';
import { lpSolver } from '../decoy/bounds.js';
import { readMeasuredCounts } from '../decoy/counts.js';
import { decoyRate } from '../decoy/request.js';
import { ValidationError } from '../problem/errors.js';
import { entropyRequestFrom } from '../problem/entropy-request.js';
import type { DecoyWorkerMessage } from './decoy-rate.js';
import type { DecoyMeasuredCounts__Output } from './generated/renyibound/v1/DecoyMeasuredCounts.js';
import type { DecoyRateReply } from './generated/renyibound/v1/DecoyRateReply.js';
import type { DecoyRateRequest__Output } from './generated/renyibound/v1/DecoyRateRequest.js';

/** The counts message in the JSON shape of the measured-counts file (presence markers and unset fields dropped). */
function countsJson(counts: DecoyMeasuredCounts__Output): unknown {
  const known: Record<string, number> = {};
  for (const [key, value] of Object.entries(counts.known ?? {})) if (!key.startsWith('_') && typeof value === 'number') known[key] = value;
  return {
    description: counts.description,
    signal: counts.signal,
    decoys: counts.decoys,
    ...(counts.zBasisProbability !== 0 ? { zBasisProbability: counts.zBasisProbability } : {}),
    known,
    sessions: counts.sessions.map((s) => ({ label: s.label, distanceKm: s.distanceKm, counts: s.counts })),
  };
}

export async function decoyRateReply(request: DecoyRateRequest__Output): Promise<DecoyRateReply> {
  const channel = request.channel;
  const protocol = request.protocol;
  if (request.counts === null && (channel === null || protocol === null)) {
    throw new ValidationError(channel === null ? 'channel' : 'protocol', 'is required unless counts are given');
  }
  const cutoff = request.cutoff === 0 ? 12 : request.cutoff;
  if (cutoff < 2 || cutoff > 60) throw new ValidationError('cutoff', `must lie in [2, 60] (got ${cutoff})`);
  const kind = request.entropy === 'ENTROPY_KIND_UNSPECIFIED' ? 'VON_NEUMANN' : request.entropy;
  const answer = decoyRate(await lpSolver(), {
    channel: {
      distanceKm: channel?.distanceKm ?? 0,
      fiberLossDbPerKm: channel?.fiberLossDbPerKm ?? 0,
      detectorEfficiency: channel?.detectorEfficiency ?? 0,
      darkCountYield: channel?.darkCountYield ?? 0,
      misalignment: channel?.misalignment ?? 0,
    },
    protocol: {
      signal: protocol?.signal ?? 0,
      decoys: protocol?.decoys ?? [],
      zBasisProbability: protocol === null || protocol.zBasisProbability === 0 ? 0.5 : protocol.zBasisProbability,
      ecEfficiency: protocol?.ecEfficiency || 1.22,
    },
    counts: request.counts === null ? undefined : readMeasuredCounts(countsJson(request.counts), 'counts'),
    session: request.session ?? undefined,
    fit: request.fit,
    sweepDistancesKm: request.sweepDistancesKm.length === 0 ? undefined : request.sweepDistancesKm,
    entropy: entropyRequestFrom(kind, request.alpha ?? undefined),
    cutoff,
    settings: { timeLimitMs: request.timeLimitMs === 0 ? 20000 : request.timeLimitMs },
  });
  return {
    ratePerPulse: answer.ratePerPulse ?? undefined,
    singlePhotonYieldLower: answer.singlePhotonYieldLower ?? 0,
    singlePhotonErrorUpper: answer.singlePhotonErrorUpper ?? 0,
    singlePhotonFraction: answer.singlePhotonFraction ?? 0,
    singlePhotonBound: answer.singlePhotonBound ?? undefined,
    singlePhotonStatus: answer.singlePhoton?.status ?? '',
    sweep: (answer.sweep ?? []).map((p) => ({
      distanceKm: p.distanceKm,
      ratePerPulse: p.ratePerPulse ?? undefined,
      status: p.status,
      singlePhotonYieldLower: p.singlePhotonYieldLower,
      singlePhotonErrorUpper: p.singlePhotonErrorUpper,
      rateLower95: p.rateLower95,
      rateUpper95: p.rateUpper95,
    })),
    fittedParameters: Object.entries(answer.fit?.parameters ?? {}).map(([name, v]) => ({
      name,
      value: v.value,
      standardError: v.standardError,
      lower95: v.interval95[0],
      upper95: v.interval95[1],
      fixed: v.fixed,
    })),
    chiSquare: answer.fit?.chiSquare ?? 0,
    degreesOfFreedom: answer.fit?.degreesOfFreedom ?? 0,
    answerJson: formatJson(answer),
  };
}

export default async function decoyRateTask(request: DecoyRateRequest__Output): Promise<DecoyWorkerMessage> {
  try {
    return { reply: await decoyRateReply(request) };
  } catch (error) {
    if (error instanceof ValidationError) return { field: error.field, reason: error.reason };
    return { reason: error instanceof Error ? error.message : String(error) };
  }
}
