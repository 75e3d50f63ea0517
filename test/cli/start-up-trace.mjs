// Preloaded (`node --import`) by test/cli/start-up.test.ts after tsx: records what a CLI process loads and writes it
// as JSON to the file named by RENYI_BOUND_START_UP_TRACE when the process exits.
import { createRequire, register } from 'node:module';
import { writeFileSync } from 'node:fs';
import { MessageChannel } from 'node:worker_threads';

const { port1, port2 } = new MessageChannel();
/** Every module the ES-module loader loaded: its URL and format ('module', 'commonjs', 'builtin', …). */
const esm = [];
port1.on('message', (entry) => esm.push(entry));
port1.unref();
register(
  `data:text/javascript,${encodeURIComponent(`
let port;
export function initialize(data) { port = data.port; }
export async function load(url, context, next) {
  const result = await next(url, context);
  port.postMessage({ url, format: result.format });
  return result;
}`)}`,
  { data: { port: port2 }, transferList: [port2] },
);

const builtinsBefore = new Set(process.moduleLoadList);
process.on('exit', () => {
  writeFileSync(
    process.env.RENYI_BOUND_START_UP_TRACE,
    JSON.stringify({
      esm,
      commonjs: Object.keys(createRequire(import.meta.url).cache),
      builtins: process.moduleLoadList.filter((m) => !builtinsBefore.has(m)),
    }),
  );
});
