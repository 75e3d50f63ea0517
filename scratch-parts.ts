import { solveRequestToWire } from './src/client/client.js';
import { largeProblemJson } from './test/frank-wolfe/large-problem.js';
import { loadServicePackage } from './src/service/proto.js';
import { solveInputFromWire } from './src/service/batch.js';
import { prepareSolve, PreparedRequestMemo } from './src/service/prepare.js';
import { createHash } from 'node:crypto';
const json = largeProblemJson(16, 16, 2, 5);
const wire = solveRequestToWire({ problem: json, entropy: 'von-neumann', settings: { timeLimitMs: 2000 } }, false);
const def = loadServicePackage().renyibound.v1.RenyiBound.service.Solve as any;
const bytes = def.requestSerialize(wire);
for (let i = 0; i < 2; i++) {
  let t = performance.now(); const req = def.requestDeserialize(bytes); console.log('deserialize', (performance.now() - t).toFixed(0));
  t = performance.now(); const s = JSON.stringify({ ...req, requestId: '' }); console.log('stringify', (performance.now() - t).toFixed(0), s.length);
  t = performance.now(); createHash('sha256').update(s).digest('hex'); console.log('sha', (performance.now() - t).toFixed(0));
  t = performance.now(); const input = solveInputFromWire(req); console.log('fromWire', (performance.now() - t).toFixed(0));
  t = performance.now(); prepareSolve(input); console.log('prepare', (performance.now() - t).toFixed(0));
}
