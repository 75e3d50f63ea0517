// Transport security and access control of the service: TLS (optionally mutual), a bearer token checked on
// every RPC except health, and the refusal to expose a plaintext, unauthenticated server beyond loopback.
import { createHash, timingSafeEqual } from 'node:crypto';
import { readFileSync } from 'node:fs';
import * as grpc from '@grpc/grpc-js';
import { ValidationError } from '../problem/errors.js';

/** Environment variable naming the token file when `--token-file` is not given. */
export const TOKEN_FILE_ENV = 'RENYI_BOUND_TOKEN_FILE';
/** Metadata key of the bearer token (lowercase, as HTTP/2 requires). */
export const AUTHORIZATION_KEY = 'authorization';
/** Shortest token accepted: 16 printable characters (e.g. `openssl rand -hex 32` gives 64). */
export const MIN_TOKEN_LENGTH = 16;
/** The standard health service answers without a token (probes and load balancers carry none). */
const HEALTH_SERVICE_PREFIX = '/grpc.health.v1.Health/';

/** PEM contents of the server's certificate chain and key, and optionally the CA its clients must present. */
export interface ServerTls {
  cert: Buffer;
  key: Buffer;
  /** When set, clients must present a certificate signed by this CA (mutual TLS). */
  clientCa?: Buffer;
}

/** How the server protects itself; everything absent means plaintext and no token (the loopback default). */
export interface ServerSecurity {
  tls?: ServerTls;
  /** Bearer tokens accepted on every RPC but health (several during a rotation). */
  tokens?: string[];
  /** Bind a non-loopback address even without TLS and token (the operator says the network is trusted). */
  allowInsecureRemote?: boolean;
}

/** What a client presents: the CA that signed the server's certificate, its own pair for mutual TLS, a token. */
export interface ClientSecurity {
  ca?: Buffer;
  cert?: Buffer;
  key?: Buffer;
  token?: string;
}

function readPem(path: string, field: string): Buffer {
  let contents: Buffer;
  try {
    contents = readFileSync(path);
  } catch (error) {
    throw new ValidationError(field, `cannot read ${JSON.stringify(path)}: ${(error as NodeJS.ErrnoException).code ?? (error as Error).message}`);
  }
  if (!contents.includes('-----BEGIN ')) throw new ValidationError(field, `${JSON.stringify(path)} is not a PEM file`);
  return contents;
}

/**
 * The tokens in a file, one per line (blank lines and surrounding whitespace ignored): a server accepts each, a
 * client sends the first, so a new token can be put first and the old one kept below it during a rotation. Each
 * must be printable ASCII without spaces (a metadata value) and at least MIN_TOKEN_LENGTH long.
 */
export function readTokenFile(path: string, field = '--token-file'): string[] {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (error) {
    throw new ValidationError(field, `cannot read ${JSON.stringify(path)}: ${(error as NodeJS.ErrnoException).code ?? (error as Error).message}`);
  }
  const tokens = text.split(/\r?\n/).map((line) => line.trim()).filter((line) => line !== '');
  if (tokens.length === 0) throw new ValidationError(field, `${JSON.stringify(path)} holds no token`);
  for (const token of tokens) {
    if (!/^[\x21-\x7e]*$/.test(token)) throw new ValidationError(field, 'a token must be printable ASCII without spaces');
    if (token.length < MIN_TOKEN_LENGTH) {
      throw new ValidationError(field, `a token must have at least ${MIN_TOKEN_LENGTH} characters (got ${token.length})`);
    }
  }
  return tokens;
}

/** The tokens of the file named by `--token-file`, else by RENYI_BOUND_TOKEN_FILE, else none. */
export function tokensFromOptions(tokenFile: string | undefined, env: NodeJS.ProcessEnv = process.env): string[] | undefined {
  if (tokenFile !== undefined) return readTokenFile(tokenFile, '--token-file');
  const fromEnv = env[TOKEN_FILE_ENV];
  return fromEnv ? readTokenFile(fromEnv, TOKEN_FILE_ENV) : undefined;
}

/** A certificate and its key come together: one without the other is an error naming the missing option. */
function checkPair(paths: { tlsCert?: string; tlsKey?: string }, what: string): void {
  if ((paths.tlsCert === undefined) !== (paths.tlsKey === undefined)) {
    throw new ValidationError(paths.tlsCert === undefined ? '--tls-cert' : '--tls-key', `${what} needs both --tls-cert and --tls-key`);
  }
}

/** A PEM file option, when given. */
const optionalPem = (path: string | undefined, field: string): Buffer | undefined => (path === undefined ? undefined : readPem(path, field));

/** Command-line paths of the server's security options. */
export interface ServerSecurityPaths {
  tlsCert?: string;
  tlsKey?: string;
  tlsClientCa?: string;
  tokenFile?: string;
  allowInsecureRemote?: boolean;
}

export function serverSecurityFromPaths(paths: ServerSecurityPaths, env: NodeJS.ProcessEnv = process.env): ServerSecurity {
  checkPair(paths, 'TLS');
  if (paths.tlsClientCa !== undefined && paths.tlsCert === undefined) {
    throw new ValidationError('--tls-client-ca', 'mutual TLS needs the server’s own --tls-cert and --tls-key');
  }
  const tls =
    paths.tlsCert === undefined
      ? undefined
      : {
          cert: readPem(paths.tlsCert, '--tls-cert'),
          key: readPem(paths.tlsKey!, '--tls-key'),
          clientCa: optionalPem(paths.tlsClientCa, '--tls-client-ca'),
        };
  return { tls, tokens: tokensFromOptions(paths.tokenFile, env), allowInsecureRemote: paths.allowInsecureRemote };
}

/** Command-line paths of a client's security options. */
export interface ClientSecurityPaths {
  tlsCa?: string;
  tlsCert?: string;
  tlsKey?: string;
  tokenFile?: string;
}

export function clientSecurityFromPaths(paths: ClientSecurityPaths, env: NodeJS.ProcessEnv = process.env): ClientSecurity {
  checkPair(paths, 'a client certificate');
  if (paths.tlsCert !== undefined && paths.tlsCa === undefined) {
    throw new ValidationError('--tls-ca', 'a client certificate is only sent over TLS: give the server’s CA too');
  }
  return {
    ca: optionalPem(paths.tlsCa, '--tls-ca'),
    cert: optionalPem(paths.tlsCert, '--tls-cert'),
    key: optionalPem(paths.tlsKey, '--tls-key'),
    token: tokensFromOptions(paths.tokenFile, env)?.[0],
  };
}

/** Whether `host` (as given to --host) only accepts connections from this machine. */
export function isLoopbackHost(host: string): boolean {
  const bare = host.replace(/^\[(.*)\]$/, '$1').toLowerCase();
  return bare === 'localhost' || bare === '::1' || /^127(\.\d{1,3}){3}$/.test(bare) || /^::ffff:127(\.\d{1,3}){3}$/.test(bare);
}

/** Refuses to expose a plaintext server without a token beyond loopback, unless the operator said so. */
export function checkExposure(host: string, security: ServerSecurity): void {
  if (isLoopbackHost(host) || security.tls !== undefined || security.tokens !== undefined || security.allowInsecureRemote) return;
  throw new ValidationError(
    '--host',
    `refusing to serve ${host} without TLS or a token: give --tls-cert/--tls-key, --token-file (or ${TOKEN_FILE_ENV}), ` +
      'or --allow-insecure-remote if the network is trusted',
  );
}

/** A warning for a token sent in plaintext beyond loopback (allowed, but anyone on the path can read it). */
export function exposureWarning(host: string, security: ServerSecurity): string | undefined {
  if (isLoopbackHost(host) || security.tls !== undefined || security.tokens === undefined) return undefined;
  return `the bearer token travels in plaintext on ${host}: give --tls-cert/--tls-key unless the network is trusted`;
}

export function serverCredentials(tls: ServerTls | undefined): grpc.ServerCredentials {
  if (tls === undefined) return grpc.ServerCredentials.createInsecure();
  return grpc.ServerCredentials.createSsl(tls.clientCa ?? null, [{ cert_chain: tls.cert, private_key: tls.key }], tls.clientCa !== undefined);
}

function digest(text: string): Buffer {
  return createHash('sha256').update(text, 'utf8').digest();
}

/** Compares a presented token with the accepted ones in constant time (equal-length SHA-256 digests). */
export class TokenCheck {
  private readonly expected: Buffer[];

  constructor(tokens: string[]) {
    this.expected = tokens.map(digest);
  }

  /** Whether an `authorization` header value is `Bearer <an accepted token>`. */
  accepts(header: unknown): boolean {
    if (typeof header !== 'string') return false;
    const match = /^Bearer ([\x21-\x7e]+)$/i.exec(header);
    // Digest something even for a malformed header, and compare with every token without stopping early, so the
    // timing says nothing about the tokens.
    const presented = digest(match?.[1] ?? header);
    let accepted = false;
    for (const expected of this.expected) accepted = timingSafeEqual(presented, expected) || accepted;
    return accepted && match !== null;
  }
}

/** A server interceptor answering UNAUTHENTICATED to every call but health that lacks an accepted token. */
export function tokenInterceptor(tokens: string[]): grpc.ServerInterceptor {
  const check = new TokenCheck(tokens);
  return (method, call) => {
    if (method.path.startsWith(HEALTH_SERVICE_PREFIX)) return new grpc.ServerInterceptingCall(call);
    const listener = new grpc.ServerListenerBuilder()
      .withOnReceiveMetadata((metadata, next) => {
        const presented = metadata.get(AUTHORIZATION_KEY);
        if (presented.length === 1 && check.accepts(presented[0])) next(metadata);
        else {
          call.sendStatus({
            code: grpc.status.UNAUTHENTICATED,
            details: presented.length === 0 ? 'this server requires a bearer token (--token-file)' : 'the bearer token was not accepted',
          });
        }
      })
      .build();
    return new grpc.ServerInterceptingCall(call, new grpc.ResponderBuilder().withStart((next) => next(listener)).build());
  };
}

/** The grpc.Server options for `security` (its interceptors). */
export function serverOptions(security: ServerSecurity): grpc.ServerOptions {
  return security.tokens === undefined ? {} : { interceptors: [tokenInterceptor(security.tokens)] };
}

/** Channel credentials: TLS when a CA is given (with the client's pair for mutual TLS), plaintext otherwise. */
export function channelCredentials(security: ClientSecurity): grpc.ChannelCredentials {
  if (security.ca === undefined) return grpc.credentials.createInsecure();
  return grpc.credentials.createSsl(security.ca, security.key ?? null, security.cert ?? null);
}

/**
 * Client options adding the bearer token to every call. An interceptor rather than call credentials: grpc-js
 * refuses call credentials on a plaintext channel, and a token over plaintext loopback is a supported setup.
 */
export function clientOptions(security: ClientSecurity): grpc.ClientOptions {
  const token = security.token;
  if (token === undefined) return {};
  const addToken: grpc.Interceptor = (options, nextCall) =>
    new grpc.InterceptingCall(nextCall(options), {
      start: (metadata, listener, next) => {
        metadata.set(AUTHORIZATION_KEY, `Bearer ${token}`);
        next(metadata, listener);
      },
    });
  return { interceptors: [addToken] };
}

/** A stable key of a client security setting, so clients with different credentials are not shared. */
export function clientSecurityKey(security: ClientSecurity): string {
  const parts = [security.ca, security.cert, security.key, security.token === undefined ? undefined : Buffer.from(security.token)];
  return createHash('sha256')
    .update(parts.map((part) => (part === undefined ? '-' : createHash('sha256').update(part).digest('hex'))).join(','))
    .digest('hex');
}

let defaultClientSecurity: ClientSecurity = {};

/** Security used by clients that are not given their own (the command line sets it from its options). */
export function setDefaultClientSecurity(security: ClientSecurity): void {
  defaultClientSecurity = security;
}

export function getDefaultClientSecurity(): ClientSecurity {
  return defaultClientSecurity;
}

/**
 * A plaintext listener serving only grpc.health.v1, for probes that speak neither TLS nor tokens (Kubernetes'
 * native gRPC probes). It tells nothing but SERVING / NOT_SERVING.
 */
export async function serveHealthOnly(
  health: { addToServer(server: grpc.Server): void },
  address: string,
): Promise<{ server: grpc.Server; port: number }> {
  const server = new grpc.Server();
  health.addToServer(server);
  const port = await new Promise<number>((resolve, reject) =>
    server.bindAsync(address, grpc.ServerCredentials.createInsecure(), (error, bound) => (error ? reject(error) : resolve(bound))),
  );
  return { server, port };
}
