import { RenyiBoundServer } from './src/service/server.js';
import { connect, solveRequestToWire } from './src/client/client.js';
import { largeProblemJson } from './test/frank-wolfe/large-problem.js';
import { pino } from 'pino';
import { loadServicePackage } from './src/service/proto.js';

const server = await RenyiBoundServer.start({ host: '127.0.0.1', port: 0, workers: 1, cacheDirectory: false, logger: pino({ level: 'info' }) });
const json = largeProblemJson(16, 16, Number(process.argv[2] ?? 2), 5);
let t = performance.now();
const wire = solveRequestToWire({ problem: json, entropy: 'von-neumann', settings: { timeLimitMs: 2000 } }, false);
console.log('toWire', (performance.now() - t).toFixed(0));
const def = loadServicePackage().renyibound.v1.RenyiBound.service.Solve as any;
t = performance.now(); const bytes = def.requestSerialize(wire); console.log('serialize', (performance.now() - t).toFixed(0), bytes.length);
t = performance.now(); const back = def.requestDeserialize(bytes); console.log('deserialize', (performance.now() - t).toFixed(0));
const { client } = await connect(server.address);
for (let i = 0; i < 2; i++) {
  t = performance.now();
  let after = 0;
  const reply: any = await new Promise((res, rej) => { client.Solve(wire, (e: any, r: any) => (e ? res({result:{message:e.message}}) : res(r))); after = performance.now(); });
  console.log('sync part', (after - t).toFixed(0), 'after sync', (performance.now() - after).toFixed(0));
  console.log('call', (performance.now() - t).toFixed(0), 'solver', reply.result.seconds, reply.result.status, reply.result.message);

await server.shutdown(); process.exit(0);
}
