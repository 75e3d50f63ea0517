// TLS, mutual TLS, bearer tokens and the exposure check, through a real server on loopback. Certificates are made
// at test time with the openssl command-line tool (Debian's `openssl`, installed by .ci/run when missing).
import { execFileSync, spawn } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import * as grpc from '@grpc/grpc-js';
import { Command } from '../../src/cli/command-line.js';
import { afterAll, afterEach, beforeAll, describe, expect, it, vi } from 'vitest';
import { register as registerHealth } from '../../src/cli/health.js';
import { register as registerServe } from '../../src/cli/serve.js';
import { ValidationError } from '../../src/problem/errors.js';
import { packageRoot } from '../../src/problem/proto-options.js';
import { buildExample } from '../../src/protocols/index.js';
import { checkHealth, closeClients, RemoteCallError, solveBatchRemote, solveRemote } from '../../src/client/client.js';
import {
  checkExposure,
  exposureWarning,
  clientSecurityFromPaths,
  isLoopbackHost,
  readTokenFile,
  serverSecurityFromPaths,
  setDefaultClientSecurity,
  TokenCheck,
  tokensFromOptions,
  TOKEN_FILE_ENV,
  type ClientSecurity,
  type ServerSecurity,
} from '../../src/service/security.js';
import { RenyiBoundServer } from '../../src/service/server.js';
import { startTestServer, type TestServer } from './harness.js';

const TOKEN = 'c0ffee-5ca1ab1e-0ddba11-f00d-beef';
/** The next token of a rotation: listed first in the server's file, both accepted meanwhile. */
const NEW_TOKEN = 'feed-face-0123456789abcdef';
const GAP = 1e-6;

let directory: string;
const file = (name: string) => join(directory, name);

function openssl(args: string[]): void {
  execFileSync('openssl', args, { cwd: directory, stdio: ['ignore', 'ignore', 'pipe'] });
}

/** A P-256 key and a certificate for `subject`, signed by `ca` (self-signed when ca is undefined). */
function certificate(name: string, subject: string, ca: string | undefined, extensions: string): void {
  if (ca === undefined) {
    openssl(['req', '-x509', '-newkey', 'ec', '-pkeyopt', 'ec_paramgen_curve:P-256', '-nodes', '-keyout', `${name}.key`,
      '-out', `${name}.pem`, '-days', '1', '-subj', `/CN=${subject}`]);
    return;
  }
  writeFileSync(file(`${name}.ext`), extensions);
  openssl(['req', '-newkey', 'ec', '-pkeyopt', 'ec_paramgen_curve:P-256', '-nodes', '-keyout', `${name}.key`, '-out', `${name}.csr`,
    '-subj', `/CN=${subject}`]);
  openssl(['x509', '-req', '-in', `${name}.csr`, '-CA', `${ca}.pem`, '-CAkey', `${ca}.key`, '-set_serial', String(Date.now()),
    '-out', `${name}.pem`, '-days', '1', '-extfile', `${name}.ext`]);
}

beforeAll(() => {
  directory = mkdtempSync(join(tmpdir(), 'renyi-bound-security-'));
  certificate('ca', 'renyi-bound test CA', undefined, '');
  certificate('server', 'localhost', 'ca', 'subjectAltName=DNS:localhost,IP:127.0.0.1\nextendedKeyUsage=serverAuth\n');
  certificate('client', 'sweep-runner', 'ca', 'extendedKeyUsage=clientAuth\n');
  certificate('rogue-ca', 'somebody else', undefined, '');
  certificate('rogue-client', 'intruder', 'rogue-ca', 'extendedKeyUsage=clientAuth\n');
  writeFileSync(file('token'), `${TOKEN}\n`);
  writeFileSync(file('wrong-token'), 'c0ffee-5ca1ab1e-0ddba11-f00d-beeF\n');
  writeFileSync(file('short-token'), 'tiny\n');
  writeFileSync(file('empty-token'), '\n  \n');
  writeFileSync(file('rotation'), `${NEW_TOKEN}\n  ${TOKEN}  \n\n`);
});
afterAll(() => rmSync(directory, { recursive: true, force: true }));
afterEach(() => {
  setDefaultClientSecurity({});
  closeClients();
});

const bb84 = () => buildExample('bb84-entangled', { 'qber-z': 0.02, 'qber-x': 0.03 });

/** One solve with `security`; the RemoteCallError (or other error) when it fails. */
async function solveWith(address: string, security: ClientSecurity): Promise<{ bound?: number; error?: RemoteCallError }> {
  setDefaultClientSecurity(security);
  try {
    const result = await solveRemote(address, { problem: bb84(), entropy: 'von-neumann', settings: { gapTolerance: GAP } }, { deadlineMs: 30_000 });
    return { bound: result.certifiedLowerBound ?? undefined };
  } catch (error) {
    if (error instanceof RemoteCallError) return { error };
    throw error;
  } finally {
    closeClients();
  }
}

async function serverWith(security: ServerSecurity): Promise<TestServer> {
  return startTestServer({ workers: 1, cacheDirectory: false, security });
}

describe('token check', () => {
  it('accepts exactly `Bearer <token>` and nothing else', () => {
    const check = new TokenCheck([TOKEN]);
    expect(check.accepts(`Bearer ${TOKEN}`)).toBe(true);
    expect(check.accepts(`bearer ${TOKEN}`)).toBe(true); // the scheme is case-insensitive (RFC 7235)
    for (const header of [undefined, '', TOKEN, `Bearer ${TOKEN}x`, `Bearer ${TOKEN.slice(1)}`, `Bearer  ${TOKEN}`, `Basic ${TOKEN}`, Buffer.from(TOKEN)]) {
      expect(check.accepts(header)).toBe(false);
    }
  });

  it('reads tokens from a file (one per line, whitespace dropped), from RENYI_BOUND_TOKEN_FILE, and refuses short ones', () => {
    expect(readTokenFile(file('token'))).toEqual([TOKEN]);
    expect(readTokenFile(file('rotation'))).toEqual([NEW_TOKEN, TOKEN]);
    expect(tokensFromOptions(undefined, { [TOKEN_FILE_ENV]: file('token') })).toEqual([TOKEN]);
    expect(tokensFromOptions(file('token'), { [TOKEN_FILE_ENV]: file('wrong-token') })).toEqual([TOKEN]); // the option wins
    expect(tokensFromOptions(undefined, {})).toBeUndefined();
    expect(clientSecurityFromPaths({ tokenFile: file('rotation') }, {}).token).toBe(NEW_TOKEN); // clients send the first
    expect(() => readTokenFile(file('short-token'))).toThrow(/at least 16 characters/);
    expect(() => readTokenFile(file('empty-token'))).toThrow(/holds no token/);
    expect(() => tokensFromOptions(undefined, { [TOKEN_FILE_ENV]: file('missing') })).toThrow(new RegExp(`^${TOKEN_FILE_ENV}: cannot read`));
  });

  it('needs both halves of a TLS pair, and PEM files', () => {
    expect(() => serverSecurityFromPaths({ tlsCert: file('server.pem') }, {})).toThrow(/--tls-key: TLS needs both/);
    expect(() => serverSecurityFromPaths({ tlsCert: file('server.pem'), tlsKey: file('token') }, {})).toThrow(/--tls-key: .* is not a PEM file/);
    expect(() => serverSecurityFromPaths({ tlsClientCa: file('ca.pem') }, {})).toThrow(/--tls-client-ca/);
    expect(() => clientSecurityFromPaths({ tlsCert: file('client.pem'), tlsKey: file('client.key') }, {})).toThrow(/--tls-ca/);
  });
});

describe('exposure beyond loopback', () => {
  it('tells loopback addresses from the rest', () => {
    for (const host of ['127.0.0.1', '127.1.2.3', 'localhost', '::1', '[::1]']) expect(isLoopbackHost(host)).toBe(true);
    for (const host of ['0.0.0.0', '::', '10.0.0.7', 'renyi-bound.example.org', '128.0.0.1']) expect(isLoopbackHost(host)).toBe(false);
  });

  it('refuses a non-loopback host without TLS, token or the explicit flag', async () => {
    expect(() => checkExposure('0.0.0.0', {})).toThrow(ValidationError);
    expect(() => checkExposure('0.0.0.0', {})).toThrow(/^--host: refusing to serve 0\.0\.0\.0 without TLS or a token/);
    expect(() => checkExposure('127.0.0.1', {})).not.toThrow();
    expect(() => checkExposure('0.0.0.0', { tokens: [TOKEN] })).not.toThrow();
    expect(() => checkExposure('0.0.0.0', { allowInsecureRemote: true })).not.toThrow();
    // A token without TLS beyond loopback is allowed, with a warning in the log.
    expect(exposureWarning('0.0.0.0', { tokens: [TOKEN] })).toMatch(/plaintext on 0\.0\.0\.0/);
    expect(exposureWarning('127.0.0.1', { tokens: [TOKEN] })).toBeUndefined();
    await expect(RenyiBoundServer.start({ host: '0.0.0.0', port: 0, workers: 1, cacheDirectory: false })).rejects.toThrow(/refusing to serve/);
    const allowed = await startTestServer({ host: '0.0.0.0', workers: 1, cacheDirectory: false, security: { allowInsecureRemote: true } });
    expect(await checkHealth(allowed.server.address)).toBe('SERVING');
    await allowed.stop();
  });

  it('`serve --host 0.0.0.0` exits 1 with one line naming --host; --allow-insecure-remote is the way out', async () => {
    const program = new Command('renyi-bound');
    registerServe(program);
    let stderr = '';
    const err = vi.spyOn(process.stderr, 'write').mockImplementation((chunk) => ((stderr += String(chunk)), true));
    try {
      await program.run(['serve', '--host', '0.0.0.0', '--port', '0', '--no-disk-cache', '--workers', '1']);
    } finally {
      err.mockRestore();
    }
    expect(process.exitCode).toBe(1);
    process.exitCode = undefined;
    expect(stderr.trim().split('\n')).toHaveLength(1);
    expect(stderr).toMatch(/^renyi-bound: --host: refusing to serve 0\.0\.0\.0 without TLS or a token: .*--allow-insecure-remote/);
  });
});

describe('bearer token', () => {
  let harness: TestServer;
  beforeAll(async () => {
    harness = await serverWith(serverSecurityFromPaths({ tokenFile: file('rotation') }, {}));
  });
  afterAll(async () => harness.stop());

  it('answers UNAUTHENTICATED without the token or with a wrong one, and solves with it', async () => {
    const address = harness.server.address;
    const missing = await solveWith(address, {});
    expect(missing.error?.code).toBe(grpc.status.UNAUTHENTICATED);
    expect(missing.error?.details).toMatch(/requires a bearer token/);
    const wrong = await solveWith(address, { token: readTokenFile(file('wrong-token'))[0] });
    expect(wrong.error?.code).toBe(grpc.status.UNAUTHENTICATED);
    expect(wrong.error?.details).toMatch(/not accepted/);
    const right = await solveWith(address, { token: TOKEN });
    expect(right.error).toBeUndefined();
    // Both tokens of a rotation are accepted.
    expect((await solveWith(address, { token: NEW_TOKEN })).error).toBeUndefined();
    // 1 − h(Q_X) for the entangled BB84 model with Q_X = 0.03 (Shor & Preskill 2000): 0.80560...
    expect(right.bound!).toBeCloseTo(1 - (-0.03 * Math.log2(0.03) - 0.97 * Math.log2(0.97)), 5);
  });

  it('guards streams too: a batch without the token ends UNAUTHENTICATED before any item', async () => {
    const batch = solveBatchRemote(harness.server.address, { grid: { example: 'bb84-entangled', axes: [{ name: 'qber-x', values: [0.02] }], entropies: ['VON_NEUMANN'] } });
    const received: unknown[] = [];
    const failure = await (async () => {
      for await (const item of batch.items) received.push(item);
    })().catch((error: unknown) => error);
    expect(received).toEqual([]);
    expect((failure as RemoteCallError).code).toBe(grpc.status.UNAUTHENTICATED);
  });

  it('lets health through without a token', async () => {
    expect(await checkHealth(harness.server.address)).toBe('SERVING');
  });

  it('the `solve` command exits 1 with one line `renyi-bound: <address>: UNAUTHENTICATED: …`, and works with RENYI_BOUND_TOKEN_FILE', async () => {
    writeFileSync(file('problem.json'), JSON.stringify(bb84()));
    const solve = (env: NodeJS.ProcessEnv) =>
      new Promise<{ status: number | null; stdout: string; stderr: string }>((resolve) => {
        const child = spawn(process.execPath, ['--import', 'tsx', join(packageRoot(), 'src', 'cli', 'main.ts'), 'solve', file('problem.json'),
          '--entropy', 'von-neumann', '--server', harness.server.address], { env: { ...process.env, [TOKEN_FILE_ENV]: '', ...env }, cwd: packageRoot() });
        let stdout = '';
        let stderr = '';
        child.stdout.on('data', (chunk) => (stdout += String(chunk)));
        child.stderr.on('data', (chunk) => (stderr += String(chunk)));
        child.on('close', (status) => resolve({ status, stdout, stderr }));
      });
    const [refused, accepted] = await Promise.all([solve({}), solve({ [TOKEN_FILE_ENV]: file('token') })]);
    expect(refused.status).toBe(1);
    expect(refused.stdout).toBe('');
    expect(refused.stderr.trim().split('\n')).toEqual([`renyi-bound: ${harness.server.address}: UNAUTHENTICATED: this server requires a bearer token (--token-file)`]);
    expect(accepted.status).toBe(0);
    expect(JSON.parse(accepted.stdout).status).toBe('CERTIFIED');
  });
});

describe('TLS', () => {
  let harness: TestServer;
  beforeAll(async () => {
    harness = await serverWith(serverSecurityFromPaths({ tlsCert: file('server.pem'), tlsKey: file('server.key') }, {}));
  });
  afterAll(async () => harness.stop());

  it('solves over TLS with the CA, and a plaintext client or one trusting another CA gets no answer', async () => {
    const address = harness.server.address;
    const trusted = await solveWith(address, clientSecurityFromPaths({ tlsCa: file('ca.pem') }, {}));
    expect(trusted.error).toBeUndefined();
    expect(trusted.bound).toBeGreaterThan(0.8);
    const plaintext = await solveWith(address, {});
    expect(plaintext.error?.code).toBe(grpc.status.UNAVAILABLE);
    const otherCa = await solveWith(address, clientSecurityFromPaths({ tlsCa: file('rogue-ca.pem') }, {}));
    expect(otherCa.error?.code).toBe(grpc.status.UNAVAILABLE);
  });

  it('the health command speaks TLS with --tls-ca', async () => {
    const run = async (args: string[]) => {
      const program = new Command('renyi-bound');
      registerHealth(program);
      let stdout = '';
      const out = vi.spyOn(process.stdout, 'write').mockImplementation((chunk) => ((stdout += String(chunk)), true));
      try {
        await program.run(args);
      } finally {
        out.mockRestore();
      }
      const status = process.exitCode;
      process.exitCode = undefined;
      return { status, stdout: stdout.trim() };
    };
    expect(await run(['health', '--server', harness.server.address, '--tls-ca', file('ca.pem')])).toEqual({ status: 0, stdout: 'SERVING' });
    setDefaultClientSecurity({});
    expect(await run(['health', '--server', harness.server.address, '--timeout-ms', '2000'])).toEqual({ status: 1, stdout: 'UNREACHABLE' });
  });
});

describe('mutual TLS with a token', () => {
  let harness: TestServer;
  beforeAll(async () => {
    harness = await startTestServer({
      workers: 1,
      cacheDirectory: false,
      security: serverSecurityFromPaths({ tlsCert: file('server.pem'), tlsKey: file('server.key'), tlsClientCa: file('ca.pem'), tokenFile: file('token') }, {}),
      healthPort: 0,
    });
  });
  afterAll(async () => harness.stop());

  it('rejects a client without a certificate or with one from another CA, and serves one with both certificate and token', async () => {
    const address = harness.server.address;
    const noCertificate = await solveWith(address, clientSecurityFromPaths({ tlsCa: file('ca.pem'), tokenFile: file('token') }, {}));
    expect(noCertificate.error?.code).toBe(grpc.status.UNAVAILABLE);
    const rogue = await solveWith(address, clientSecurityFromPaths({ tlsCa: file('ca.pem'), tlsCert: file('rogue-client.pem'), tlsKey: file('rogue-client.key'), tokenFile: file('token') }, {}));
    expect(rogue.error?.code).toBe(grpc.status.UNAVAILABLE);
    const noToken = await solveWith(address, clientSecurityFromPaths({ tlsCa: file('ca.pem'), tlsCert: file('client.pem'), tlsKey: file('client.key') }, {}));
    expect(noToken.error?.code).toBe(grpc.status.UNAUTHENTICATED);
    const accepted = await solveWith(address, clientSecurityFromPaths({ tlsCa: file('ca.pem'), tlsCert: file('client.pem'), tlsKey: file('client.key'), tokenFile: file('token') }, {}));
    expect(accepted.error).toBeUndefined();
    expect(accepted.bound).toBeGreaterThan(0.8);
  });

  it('the plaintext health port answers probes and nothing else', async () => {
    const healthAddress = `127.0.0.1:${harness.server.healthListener!.port}`;
    expect(await checkHealth(healthAddress)).toBe('SERVING');
    const other = await solveWith(healthAddress, { token: TOKEN });
    expect(other.error?.code).toBe(grpc.status.UNIMPLEMENTED);
  });
});
