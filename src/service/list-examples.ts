// ListExamples: the example builders with their parameters, defaults and ranges (same data as `example --list`).
import type * as grpc from '@grpc/grpc-js';
import { exampleCatalogue } from '../protocols/catalogue.js';
import type { ListExamplesReply } from './generated/renyibound/v1/ListExamplesReply.js';
import type { ListExamplesRequest__Output } from './generated/renyibound/v1/ListExamplesRequest.js';

export function listExamples(
  _call: grpc.ServerUnaryCall<ListExamplesRequest__Output, ListExamplesReply>,
  callback: grpc.sendUnaryData<ListExamplesReply>,
): void {
  callback(null, exampleCatalogue());
}
