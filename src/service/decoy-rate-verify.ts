// The VerifyDecoyRate RPC: a decoy-rate answer re-checked from its own numbers (src/decoy/verify-rate.ts,
// docs/decoy.md); quick (no optimisation), so it runs on the event loop.
import type { handleUnaryCall } from '@grpc/grpc-js';
import { verifyDecoyRate } from '../decoy/verify-rate.js';
import { ValidationError } from '../problem/errors.js';
import { toServiceError } from './errors.js';
import type { VerifyDecoyRateReply } from './generated/renyibound/v1/VerifyDecoyRateReply.js';
import type { VerifyDecoyRateRequest__Output } from './generated/renyibound/v1/VerifyDecoyRateRequest.js';

export const verifyDecoyRateHandler: handleUnaryCall<VerifyDecoyRateRequest__Output, VerifyDecoyRateReply> = (call, callback) => {
  let answer: unknown;
  try {
    answer = JSON.parse(call.request.answerJson);
  } catch (error) {
    callback(toServiceError(new ValidationError('answerJson', `is not JSON: ${(error as Error).message}`)));
    return;
  }
  const report = verifyDecoyRate(answer);
  callback(null, {
    valid: report.valid,
    reason: report.reason,
    ratePerPulse: report.recomputed?.ratePerPulse,
    singlePhotonBound: report.recomputed?.singlePhotonBound,
  });
};
