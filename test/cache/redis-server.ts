// A Redis for tests: the one named by RENYI_BOUND_TEST_REDIS_URL (CI starts it), else a private redis-server
// on a free loopback port when the binary is on PATH, else a reason to skip.
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { createServer } from 'node:net';
import { Redis } from 'ioredis';

export interface TestRedis {
  url: string;
  stop(): Promise<void>;
}

/** How long a freshly spawned redis-server gets to answer PING. */
const STARTUP_TIMEOUT_MS = 5000;

async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const server = createServer();
    server.once('error', reject);
    server.listen(0, '127.0.0.1', () => {
      const address = server.address();
      const port = typeof address === 'object' && address !== null ? address.port : 0;
      server.close(() => resolve(port));
    });
  });
}

async function answersPing(url: string): Promise<boolean> {
  const client = new Redis(url, { lazyConnect: true, maxRetriesPerRequest: 0, connectTimeout: 500, retryStrategy: () => null });
  client.on('error', () => {});
  try {
    await client.connect();
    return (await client.ping()) === 'PONG';
  } catch {
    return false;
  } finally {
    client.disconnect();
  }
}

/** A reachable Redis, or the reason there is none. */
export async function startTestRedis(): Promise<TestRedis | { skipReason: string }> {
  const fromEnvironment = process.env.RENYI_BOUND_TEST_REDIS_URL;
  if (fromEnvironment) {
    if (!(await answersPing(fromEnvironment))) {
      throw new Error(`RENYI_BOUND_TEST_REDIS_URL=${fromEnvironment} does not answer PING`);
    }
    return { url: fromEnvironment, stop: async () => {} };
  }
  if (spawnSync('redis-server', ['--version']).error) {
    return { skipReason: 'redis-server is not on PATH and RENYI_BOUND_TEST_REDIS_URL is not set (apt-get install redis-server)' };
  }
  const port = await freePort();
  const child: ChildProcess = spawn(
    'redis-server',
    ['--port', String(port), '--bind', '127.0.0.1', '--save', '', '--appendonly', 'no'],
    { stdio: 'ignore' },
  );
  const url = `redis://127.0.0.1:${port}`;
  const deadline = Date.now() + STARTUP_TIMEOUT_MS;
  while (!(await answersPing(url))) {
    if (Date.now() > deadline) {
      child.kill();
      throw new Error(`redis-server on port ${port} did not start within ${STARTUP_TIMEOUT_MS} ms`);
    }
    await new Promise((resolve) => setTimeout(resolve, 50));
  }
  return {
    url,
    stop: async () => {
      if (child.exitCode !== null) return;
      const exited = new Promise((resolve) => child.once('exit', resolve));
      child.kill('SIGTERM');
      await exited;
    },
  };
}

/** A redis-server of this test's own, which the test may stop and start again on the same port. */
export interface PrivateRedis {
  url: string;
  port: number;
  /** Stops the server (SIGTERM; nothing persisted). */
  stop(): Promise<void>;
  /** Starts it again on the same port. */
  start(): Promise<void>;
}

/** A private redis-server, or the reason there is none (the binary is not on PATH). */
export async function startPrivateRedis(): Promise<PrivateRedis | { skipReason: string }> {
  if (spawnSync('redis-server', ['--version']).error) {
    return { skipReason: 'redis-server is not on PATH (apt-get install redis-server): this test stops and restarts its own Redis' };
  }
  const port = await freePort();
  const url = `redis://127.0.0.1:${port}`;
  let child: ChildProcess | undefined;
  const start = async () => {
    child = spawn('redis-server', ['--port', String(port), '--bind', '127.0.0.1', '--save', '', '--appendonly', 'no'], { stdio: 'ignore' });
    const deadline = Date.now() + STARTUP_TIMEOUT_MS;
    while (!(await answersPing(url))) {
      if (Date.now() > deadline) throw new Error(`redis-server on port ${port} did not start within ${STARTUP_TIMEOUT_MS} ms`);
      await new Promise((resolve) => setTimeout(resolve, 50));
    }
  };
  const stop = async () => {
    const running = child;
    if (running === undefined || running.exitCode !== null) return;
    const exited = new Promise((resolve) => running.once('exit', resolve));
    running.kill('SIGTERM');
    await exited;
  };
  await start();
  return { url, port, stop, start };
}
