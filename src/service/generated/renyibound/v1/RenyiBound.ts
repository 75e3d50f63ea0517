// Original file: proto/renyibound/v1/service.proto

import type * as grpc from '@grpc/grpc-js'
import type { MethodDefinition } from '@grpc/proto-loader'
import type { BatchItem as _renyibound_v1_BatchItem, BatchItem__Output as _renyibound_v1_BatchItem__Output } from '../../renyibound/v1/BatchItem.js';
import type { BatchRequest as _renyibound_v1_BatchRequest, BatchRequest__Output as _renyibound_v1_BatchRequest__Output } from '../../renyibound/v1/BatchRequest.js';
import type { DecoyRateReply as _renyibound_v1_DecoyRateReply, DecoyRateReply__Output as _renyibound_v1_DecoyRateReply__Output } from '../../renyibound/v1/DecoyRateReply.js';
import type { DecoyRateRequest as _renyibound_v1_DecoyRateRequest, DecoyRateRequest__Output as _renyibound_v1_DecoyRateRequest__Output } from '../../renyibound/v1/DecoyRateRequest.js';
import type { KeyLengthReply as _renyibound_v1_KeyLengthReply, KeyLengthReply__Output as _renyibound_v1_KeyLengthReply__Output } from '../../renyibound/v1/KeyLengthReply.js';
import type { KeyLengthRequest as _renyibound_v1_KeyLengthRequest, KeyLengthRequest__Output as _renyibound_v1_KeyLengthRequest__Output } from '../../renyibound/v1/KeyLengthRequest.js';
import type { KeyLengthStreamItem as _renyibound_v1_KeyLengthStreamItem, KeyLengthStreamItem__Output as _renyibound_v1_KeyLengthStreamItem__Output } from '../../renyibound/v1/KeyLengthStreamItem.js';
import type { ListExamplesReply as _renyibound_v1_ListExamplesReply, ListExamplesReply__Output as _renyibound_v1_ListExamplesReply__Output } from '../../renyibound/v1/ListExamplesReply.js';
import type { ListExamplesRequest as _renyibound_v1_ListExamplesRequest, ListExamplesRequest__Output as _renyibound_v1_ListExamplesRequest__Output } from '../../renyibound/v1/ListExamplesRequest.js';
import type { SolveReply as _renyibound_v1_SolveReply, SolveReply__Output as _renyibound_v1_SolveReply__Output } from '../../renyibound/v1/SolveReply.js';
import type { SolveRequest as _renyibound_v1_SolveRequest, SolveRequest__Output as _renyibound_v1_SolveRequest__Output } from '../../renyibound/v1/SolveRequest.js';
import type { VerifyDecoyRateReply as _renyibound_v1_VerifyDecoyRateReply, VerifyDecoyRateReply__Output as _renyibound_v1_VerifyDecoyRateReply__Output } from '../../renyibound/v1/VerifyDecoyRateReply.js';
import type { VerifyDecoyRateRequest as _renyibound_v1_VerifyDecoyRateRequest, VerifyDecoyRateRequest__Output as _renyibound_v1_VerifyDecoyRateRequest__Output } from '../../renyibound/v1/VerifyDecoyRateRequest.js';
import type { VerifyReply as _renyibound_v1_VerifyReply, VerifyReply__Output as _renyibound_v1_VerifyReply__Output } from '../../renyibound/v1/VerifyReply.js';
import type { VerifyRequest as _renyibound_v1_VerifyRequest, VerifyRequest__Output as _renyibound_v1_VerifyRequest__Output } from '../../renyibound/v1/VerifyRequest.js';

export interface RenyiBoundClient extends grpc.Client {
  DecoyRate(argument: _renyibound_v1_DecoyRateRequest, metadata: grpc.Metadata, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_DecoyRateReply__Output>): grpc.ClientUnaryCall;
  DecoyRate(argument: _renyibound_v1_DecoyRateRequest, metadata: grpc.Metadata, callback: grpc.requestCallback<_renyibound_v1_DecoyRateReply__Output>): grpc.ClientUnaryCall;
  DecoyRate(argument: _renyibound_v1_DecoyRateRequest, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_DecoyRateReply__Output>): grpc.ClientUnaryCall;
  DecoyRate(argument: _renyibound_v1_DecoyRateRequest, callback: grpc.requestCallback<_renyibound_v1_DecoyRateReply__Output>): grpc.ClientUnaryCall;
  decoyRate(argument: _renyibound_v1_DecoyRateRequest, metadata: grpc.Metadata, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_DecoyRateReply__Output>): grpc.ClientUnaryCall;
  decoyRate(argument: _renyibound_v1_DecoyRateRequest, metadata: grpc.Metadata, callback: grpc.requestCallback<_renyibound_v1_DecoyRateReply__Output>): grpc.ClientUnaryCall;
  decoyRate(argument: _renyibound_v1_DecoyRateRequest, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_DecoyRateReply__Output>): grpc.ClientUnaryCall;
  decoyRate(argument: _renyibound_v1_DecoyRateRequest, callback: grpc.requestCallback<_renyibound_v1_DecoyRateReply__Output>): grpc.ClientUnaryCall;
  
  KeyLength(argument: _renyibound_v1_KeyLengthRequest, metadata: grpc.Metadata, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_KeyLengthReply__Output>): grpc.ClientUnaryCall;
  KeyLength(argument: _renyibound_v1_KeyLengthRequest, metadata: grpc.Metadata, callback: grpc.requestCallback<_renyibound_v1_KeyLengthReply__Output>): grpc.ClientUnaryCall;
  KeyLength(argument: _renyibound_v1_KeyLengthRequest, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_KeyLengthReply__Output>): grpc.ClientUnaryCall;
  KeyLength(argument: _renyibound_v1_KeyLengthRequest, callback: grpc.requestCallback<_renyibound_v1_KeyLengthReply__Output>): grpc.ClientUnaryCall;
  keyLength(argument: _renyibound_v1_KeyLengthRequest, metadata: grpc.Metadata, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_KeyLengthReply__Output>): grpc.ClientUnaryCall;
  keyLength(argument: _renyibound_v1_KeyLengthRequest, metadata: grpc.Metadata, callback: grpc.requestCallback<_renyibound_v1_KeyLengthReply__Output>): grpc.ClientUnaryCall;
  keyLength(argument: _renyibound_v1_KeyLengthRequest, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_KeyLengthReply__Output>): grpc.ClientUnaryCall;
  keyLength(argument: _renyibound_v1_KeyLengthRequest, callback: grpc.requestCallback<_renyibound_v1_KeyLengthReply__Output>): grpc.ClientUnaryCall;
  
  KeyLengthStream(argument: _renyibound_v1_KeyLengthRequest, metadata: grpc.Metadata, options?: grpc.CallOptions): grpc.ClientReadableStream<_renyibound_v1_KeyLengthStreamItem__Output>;
  KeyLengthStream(argument: _renyibound_v1_KeyLengthRequest, options?: grpc.CallOptions): grpc.ClientReadableStream<_renyibound_v1_KeyLengthStreamItem__Output>;
  keyLengthStream(argument: _renyibound_v1_KeyLengthRequest, metadata: grpc.Metadata, options?: grpc.CallOptions): grpc.ClientReadableStream<_renyibound_v1_KeyLengthStreamItem__Output>;
  keyLengthStream(argument: _renyibound_v1_KeyLengthRequest, options?: grpc.CallOptions): grpc.ClientReadableStream<_renyibound_v1_KeyLengthStreamItem__Output>;
  
  ListExamples(argument: _renyibound_v1_ListExamplesRequest, metadata: grpc.Metadata, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_ListExamplesReply__Output>): grpc.ClientUnaryCall;
  ListExamples(argument: _renyibound_v1_ListExamplesRequest, metadata: grpc.Metadata, callback: grpc.requestCallback<_renyibound_v1_ListExamplesReply__Output>): grpc.ClientUnaryCall;
  ListExamples(argument: _renyibound_v1_ListExamplesRequest, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_ListExamplesReply__Output>): grpc.ClientUnaryCall;
  ListExamples(argument: _renyibound_v1_ListExamplesRequest, callback: grpc.requestCallback<_renyibound_v1_ListExamplesReply__Output>): grpc.ClientUnaryCall;
  listExamples(argument: _renyibound_v1_ListExamplesRequest, metadata: grpc.Metadata, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_ListExamplesReply__Output>): grpc.ClientUnaryCall;
  listExamples(argument: _renyibound_v1_ListExamplesRequest, metadata: grpc.Metadata, callback: grpc.requestCallback<_renyibound_v1_ListExamplesReply__Output>): grpc.ClientUnaryCall;
  listExamples(argument: _renyibound_v1_ListExamplesRequest, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_ListExamplesReply__Output>): grpc.ClientUnaryCall;
  listExamples(argument: _renyibound_v1_ListExamplesRequest, callback: grpc.requestCallback<_renyibound_v1_ListExamplesReply__Output>): grpc.ClientUnaryCall;
  
  Solve(argument: _renyibound_v1_SolveRequest, metadata: grpc.Metadata, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_SolveReply__Output>): grpc.ClientUnaryCall;
  Solve(argument: _renyibound_v1_SolveRequest, metadata: grpc.Metadata, callback: grpc.requestCallback<_renyibound_v1_SolveReply__Output>): grpc.ClientUnaryCall;
  Solve(argument: _renyibound_v1_SolveRequest, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_SolveReply__Output>): grpc.ClientUnaryCall;
  Solve(argument: _renyibound_v1_SolveRequest, callback: grpc.requestCallback<_renyibound_v1_SolveReply__Output>): grpc.ClientUnaryCall;
  solve(argument: _renyibound_v1_SolveRequest, metadata: grpc.Metadata, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_SolveReply__Output>): grpc.ClientUnaryCall;
  solve(argument: _renyibound_v1_SolveRequest, metadata: grpc.Metadata, callback: grpc.requestCallback<_renyibound_v1_SolveReply__Output>): grpc.ClientUnaryCall;
  solve(argument: _renyibound_v1_SolveRequest, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_SolveReply__Output>): grpc.ClientUnaryCall;
  solve(argument: _renyibound_v1_SolveRequest, callback: grpc.requestCallback<_renyibound_v1_SolveReply__Output>): grpc.ClientUnaryCall;
  
  SolveBatch(argument: _renyibound_v1_BatchRequest, metadata: grpc.Metadata, options?: grpc.CallOptions): grpc.ClientReadableStream<_renyibound_v1_BatchItem__Output>;
  SolveBatch(argument: _renyibound_v1_BatchRequest, options?: grpc.CallOptions): grpc.ClientReadableStream<_renyibound_v1_BatchItem__Output>;
  solveBatch(argument: _renyibound_v1_BatchRequest, metadata: grpc.Metadata, options?: grpc.CallOptions): grpc.ClientReadableStream<_renyibound_v1_BatchItem__Output>;
  solveBatch(argument: _renyibound_v1_BatchRequest, options?: grpc.CallOptions): grpc.ClientReadableStream<_renyibound_v1_BatchItem__Output>;
  
  Verify(argument: _renyibound_v1_VerifyRequest, metadata: grpc.Metadata, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_VerifyReply__Output>): grpc.ClientUnaryCall;
  Verify(argument: _renyibound_v1_VerifyRequest, metadata: grpc.Metadata, callback: grpc.requestCallback<_renyibound_v1_VerifyReply__Output>): grpc.ClientUnaryCall;
  Verify(argument: _renyibound_v1_VerifyRequest, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_VerifyReply__Output>): grpc.ClientUnaryCall;
  Verify(argument: _renyibound_v1_VerifyRequest, callback: grpc.requestCallback<_renyibound_v1_VerifyReply__Output>): grpc.ClientUnaryCall;
  verify(argument: _renyibound_v1_VerifyRequest, metadata: grpc.Metadata, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_VerifyReply__Output>): grpc.ClientUnaryCall;
  verify(argument: _renyibound_v1_VerifyRequest, metadata: grpc.Metadata, callback: grpc.requestCallback<_renyibound_v1_VerifyReply__Output>): grpc.ClientUnaryCall;
  verify(argument: _renyibound_v1_VerifyRequest, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_VerifyReply__Output>): grpc.ClientUnaryCall;
  verify(argument: _renyibound_v1_VerifyRequest, callback: grpc.requestCallback<_renyibound_v1_VerifyReply__Output>): grpc.ClientUnaryCall;
  
  VerifyDecoyRate(argument: _renyibound_v1_VerifyDecoyRateRequest, metadata: grpc.Metadata, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_VerifyDecoyRateReply__Output>): grpc.ClientUnaryCall;
  VerifyDecoyRate(argument: _renyibound_v1_VerifyDecoyRateRequest, metadata: grpc.Metadata, callback: grpc.requestCallback<_renyibound_v1_VerifyDecoyRateReply__Output>): grpc.ClientUnaryCall;
  VerifyDecoyRate(argument: _renyibound_v1_VerifyDecoyRateRequest, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_VerifyDecoyRateReply__Output>): grpc.ClientUnaryCall;
  VerifyDecoyRate(argument: _renyibound_v1_VerifyDecoyRateRequest, callback: grpc.requestCallback<_renyibound_v1_VerifyDecoyRateReply__Output>): grpc.ClientUnaryCall;
  verifyDecoyRate(argument: _renyibound_v1_VerifyDecoyRateRequest, metadata: grpc.Metadata, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_VerifyDecoyRateReply__Output>): grpc.ClientUnaryCall;
  verifyDecoyRate(argument: _renyibound_v1_VerifyDecoyRateRequest, metadata: grpc.Metadata, callback: grpc.requestCallback<_renyibound_v1_VerifyDecoyRateReply__Output>): grpc.ClientUnaryCall;
  verifyDecoyRate(argument: _renyibound_v1_VerifyDecoyRateRequest, options: grpc.CallOptions, callback: grpc.requestCallback<_renyibound_v1_VerifyDecoyRateReply__Output>): grpc.ClientUnaryCall;
  verifyDecoyRate(argument: _renyibound_v1_VerifyDecoyRateRequest, callback: grpc.requestCallback<_renyibound_v1_VerifyDecoyRateReply__Output>): grpc.ClientUnaryCall;
  
}

export interface RenyiBoundHandlers extends grpc.UntypedServiceImplementation {
  DecoyRate: grpc.handleUnaryCall<_renyibound_v1_DecoyRateRequest__Output, _renyibound_v1_DecoyRateReply>;
  
  KeyLength: grpc.handleUnaryCall<_renyibound_v1_KeyLengthRequest__Output, _renyibound_v1_KeyLengthReply>;
  
  KeyLengthStream: grpc.handleServerStreamingCall<_renyibound_v1_KeyLengthRequest__Output, _renyibound_v1_KeyLengthStreamItem>;
  
  ListExamples: grpc.handleUnaryCall<_renyibound_v1_ListExamplesRequest__Output, _renyibound_v1_ListExamplesReply>;
  
  Solve: grpc.handleUnaryCall<_renyibound_v1_SolveRequest__Output, _renyibound_v1_SolveReply>;
  
  SolveBatch: grpc.handleServerStreamingCall<_renyibound_v1_BatchRequest__Output, _renyibound_v1_BatchItem>;
  
  Verify: grpc.handleUnaryCall<_renyibound_v1_VerifyRequest__Output, _renyibound_v1_VerifyReply>;
  
  VerifyDecoyRate: grpc.handleUnaryCall<_renyibound_v1_VerifyDecoyRateRequest__Output, _renyibound_v1_VerifyDecoyRateReply>;
  
}

export interface RenyiBoundDefinition extends grpc.ServiceDefinition {
  DecoyRate: MethodDefinition<_renyibound_v1_DecoyRateRequest, _renyibound_v1_DecoyRateReply, _renyibound_v1_DecoyRateRequest__Output, _renyibound_v1_DecoyRateReply__Output>
  KeyLength: MethodDefinition<_renyibound_v1_KeyLengthRequest, _renyibound_v1_KeyLengthReply, _renyibound_v1_KeyLengthRequest__Output, _renyibound_v1_KeyLengthReply__Output>
  KeyLengthStream: MethodDefinition<_renyibound_v1_KeyLengthRequest, _renyibound_v1_KeyLengthStreamItem, _renyibound_v1_KeyLengthRequest__Output, _renyibound_v1_KeyLengthStreamItem__Output>
  ListExamples: MethodDefinition<_renyibound_v1_ListExamplesRequest, _renyibound_v1_ListExamplesReply, _renyibound_v1_ListExamplesRequest__Output, _renyibound_v1_ListExamplesReply__Output>
  Solve: MethodDefinition<_renyibound_v1_SolveRequest, _renyibound_v1_SolveReply, _renyibound_v1_SolveRequest__Output, _renyibound_v1_SolveReply__Output>
  SolveBatch: MethodDefinition<_renyibound_v1_BatchRequest, _renyibound_v1_BatchItem, _renyibound_v1_BatchRequest__Output, _renyibound_v1_BatchItem__Output>
  Verify: MethodDefinition<_renyibound_v1_VerifyRequest, _renyibound_v1_VerifyReply, _renyibound_v1_VerifyRequest__Output, _renyibound_v1_VerifyReply__Output>
  VerifyDecoyRate: MethodDefinition<_renyibound_v1_VerifyDecoyRateRequest, _renyibound_v1_VerifyDecoyRateReply, _renyibound_v1_VerifyDecoyRateRequest__Output, _renyibound_v1_VerifyDecoyRateReply__Output>
}
