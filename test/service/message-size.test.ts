// Message size and undecodable bytes on the wire: the server reads the largest problem validation allows (d = 256
// with 5 dense complex constraints is over 5 MiB as packed doubles, 6.5 MiB with branches; gRPC's usual limit is 4 MiB), refuses a larger message with
// INVALID_ARGUMENT naming its limit, and answers bytes that are not a message with INVALID_ARGUMENT, not INTERNAL.
import * as grpc from '@grpc/grpc-js';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeClients, connect } from '../../src/client/client.js';
import { matrixToJson } from '../../src/problem/json.js';
import { DEFAULT_MAX_MESSAGE_BYTES } from '../../src/service/message-size.js';
import type { SolveRequest } from '../../src/service/generated/renyibound/v1/SolveRequest.js';
import { randomHermitian, seededRandom } from '../helpers/random.js';
import { startTestServer, type TestServer } from './harness.js';

const FOUR_MIB = 4 * 2 ** 20;

/** d = 256 (16 × 16) with five dense complex constraints and no branches: decodes, then fails validation at `branches`. */
function largeRequest(): SolveRequest {
  const rng = seededRandom(256);
  const constraints = Array.from({ length: 5 }, (_, i) => {
    const operator = matrixToJson(randomHermitian(256, rng));
    return { label: `dense-${i}`, operator: { ...operator, im: operator.im ?? [] }, lower: -1e3, upper: 1e3 };
  });
  return { problem: { dimensionA: 16, dimensionB: 16, constraints } as never, entropy: 'VON_NEUMANN' };
}

async function solveError(address: string, request: SolveRequest): Promise<grpc.ServiceError | undefined> {
  const { client } = await connect(address);
  return new Promise((resolve) => client.Solve(request, (error) => resolve(error ?? undefined)));
}

/** A client that sends raw bytes to a method (no protobuf encoding). */
function rawCall(address: string, method: string, bytes: Buffer, streaming: boolean): Promise<grpc.ServiceError | undefined> {
  const client = new grpc.Client(address, grpc.credentials.createInsecure());
  const path = `/renyibound.v1.RenyiBound/${method}`;
  const identity = (b: Buffer) => b;
  return new Promise((resolve) => {
    const finish = (error: grpc.ServiceError | undefined) => {
      client.close();
      resolve(error);
    };
    if (streaming) {
      const call = client.makeServerStreamRequest(path, identity, identity, bytes);
      call.on('data', () => {});
      call.on('error', (error: grpc.ServiceError) => finish(error));
      call.on('end', () => finish(undefined));
    } else {
      client.makeUnaryRequest(path, identity, identity, bytes, (error) => finish(error ?? undefined));
    }
  });
}

describe('message size', () => {
  let standard: TestServer;
  let small: TestServer;
  beforeAll(async () => {
    standard = await startTestServer({ workers: 1, cacheDirectory: false });
    small = await startTestServer({ workers: 1, cacheDirectory: false, maxMessageBytes: FOUR_MIB });
  });
  afterAll(async () => {
    closeClients();
    await standard.stop();
    await small.stop();
  });

  it('the default limit holds 64 dense complex matrices of the maximum dimension', () => {
    expect(DEFAULT_MAX_MESSAGE_BYTES).toBeGreaterThanOrEqual(64 * 2 * 256 * 256 * 8);
  });

  it('reads a 5 MiB problem at d = 256 (five dense complex constraints) and answers from validation (the field at fault), not from the transport', async () => {
    const request = largeRequest();
    const error = await solveError(standard.server.address, request);
    expect(error?.code).toBe(grpc.status.INVALID_ARGUMENT);
    expect(error?.details).toMatch(/^problem\.branches/);
  }, 60_000);

  it('refuses a message above a configured limit with INVALID_ARGUMENT naming the limit', async () => {
    const error = await solveError(small.server.address, largeRequest());
    expect(error?.code).toBe(grpc.status.INVALID_ARGUMENT);
    expect(error?.details).toMatch(/^request: message of \d+ bytes \(5\.\d MiB\) exceeds the server's limit of 4194304 bytes \(4\.0 MiB; serve --max-message-mib\)$/);
  }, 60_000);
});

describe('bytes that are not a request message', () => {
  let harness: TestServer;
  beforeAll(async () => {
    harness = await startTestServer({ workers: 1, cacheDirectory: false });
  });
  afterAll(async () => harness.stop());

  it('get INVALID_ARGUMENT on every method, never INTERNAL, and the server keeps serving', async () => {
    // A length-delimited field claiming far more bytes than follow: protobuf decoding fails.
    const truncated = Buffer.from([0x0a, 0xff, 0xff, 0xff, 0x0f, 0x01]);
    const rng = seededRandom(7);
    const noise = Array.from({ length: 20 }, () => Buffer.from(Array.from({ length: 1 + Math.floor(rng() * 64) }, () => Math.floor(rng() * 256))));
    for (const [method, streaming] of [['Solve', false], ['Verify', false], ['SolveBatch', true]] as const) {
      const error = await rawCall(harness.server.address, method, truncated, streaming);
      expect(error?.code, method).toBe(grpc.status.INVALID_ARGUMENT);
      expect(error?.details).toMatch(/^request: is not a valid \w+ request message/);
      for (const bytes of noise) {
        // Noise that happens to decode is then refused by validation: INVALID_ARGUMENT either way.
        expect((await rawCall(harness.server.address, method, bytes, streaming))?.code, `${method} ${bytes.toString('hex')}`).toBe(grpc.status.INVALID_ARGUMENT);
      }
    }
    expect(harness.server.status).toBe('SERVING');
  }, 60_000);
});
