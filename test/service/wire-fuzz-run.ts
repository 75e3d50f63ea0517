// The longer wire fuzz: `npm run fuzz:wire -- [--runs 20000] [--seed n]`. Starts `renyi-bound serve` as its own
// process (so a crash shows as a dead process, not a failed assertion), sends malformed Solve requests and raw
// garbage, and prints what came back. Exit 0 only if every reply was INVALID_ARGUMENT with a field path and the
// server still answers health and a valid request at the end.
import { spawn } from 'node:child_process';
import { join } from 'node:path';
import * as grpc from '@grpc/grpc-js';
import fc from 'fast-check';
import { packageRoot } from '../../src/problem/proto-options.js';
import { buildExample } from '../../src/protocols/index.js';
import { checkHealth, closeClients } from '../../src/client/client.js';
import { loadServicePackage } from '../../src/service/proto.js';
import { badRequestProblem, garbageBytes, malformedRequest, RawClient } from './wire-fuzz-cases.js';

function option(name: string, fallback: number): number {
  const index = process.argv.indexOf(name);
  return index === -1 ? fallback : Number(process.argv[index + 1]);
}

const runs = option('--runs', 20_000);
const seed = option('--seed', Date.now() % 2 ** 31);
const encode = (request: unknown): Buffer => loadServicePackage().renyibound.v1.RenyiBound.service.Solve.requestSerialize(request as never);

const server = spawn(process.execPath, ['--import', 'tsx', join(packageRoot(), 'src', 'cli', 'main.ts'), 'serve', '--port', '0', '--workers', '1', '--no-disk-cache'], {
  stdio: ['ignore', 'pipe', 'inherit'],
});
let exited: number | null | undefined;
server.on('exit', (code) => (exited = code));
process.on('exit', () => server.kill('SIGKILL'));
const address = await new Promise<string>((resolve, reject) => {
  let buffered = '';
  server.stdout.on('data', (chunk) => {
    buffered += String(chunk);
    const match = /"event":"listening","address":"([^"]+)"/.exec(buffered);
    if (match) resolve(match[1]);
  });
  server.on('exit', () => reject(new Error('the server exited before listening')));
});

const raw = new RawClient(address);
const codes = new Map<string, number>();
const failures: string[] = [];
const started = performance.now();
async function check(bytes: Buffer, blame: string[] | undefined, describe: () => string): Promise<void> {
  const reply = await raw.call('Solve', bytes);
  const key = `${grpc.status[reply.code]} ${reply.field?.replace(/\[\d+\]/g, '[]') ?? '(no field)'}`;
  codes.set(key, (codes.get(key) ?? 0) + 1);
  const problem = badRequestProblem(reply, blame);
  if (problem !== undefined && failures.length < 10) failures.push(`${problem}\n    ${describe().slice(0, 300)}`);
}

const structured = fc.sample(malformedRequest, { numRuns: runs, seed });
for (const { request, blame } of structured) await check(encode(request), blame, () => JSON.stringify(request));
const garbage = fc.sample(garbageBytes, { numRuns: Math.ceil(runs / 4), seed: seed + 1 });
for (const bytes of garbage) await check(Buffer.from(bytes), undefined, () => `bytes ${Buffer.from(bytes).toString('hex')}`);
const seconds = (performance.now() - started) / 1000;

const health = exited === undefined ? await checkHealth(address) : 'DEAD';
const valid = await raw.call('Solve', encode({ problem: buildExample('bb84-entangled', {}), entropy: 'VON_NEUMANN' }));
raw.close();
closeClients();
server.kill('SIGTERM');

process.stdout.write(`wire fuzz: seed ${seed}, ${structured.length} malformed requests + ${garbage.length} garbage byte strings in ${seconds.toFixed(1)} s\n\n`);
process.stdout.write('| reply | field (indices elided) | count |\n|---|---|---|\n');
for (const [key, count] of [...codes].sort((a, b) => b[1] - a[1])) {
  const [code, field] = [key.slice(0, key.indexOf(' ')), key.slice(key.indexOf(' ') + 1)];
  process.stdout.write(`| ${code} | \`${field}\` | ${count} |\n`);
}
process.stdout.write(`\nserver after the run: health ${health}, valid request ${grpc.status[valid.code]}\n`);
for (const failure of failures) process.stdout.write(`FAIL ${failure}\n`);
const ok = failures.length === 0 && health === 'SERVING' && valid.code === grpc.status.OK;
process.stdout.write(ok ? 'every reply was INVALID_ARGUMENT with a field path\n' : 'the fuzz found problems\n');
process.exit(ok ? 0 : 1);
