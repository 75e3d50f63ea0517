// `npm run bench`: every benchmark section as Markdown tables (paste into the README). `--only name` runs one.
import type { BenchTable } from './inputs.js';

const SERVICE_MODULE = './service.js';

const SECTIONS: Record<string, () => Promise<BenchTable[]>> = {
  'linear-algebra': async () => (await import('./linear-algebra.js')).benchLinearAlgebra(),
  oracle: async () => (await import('./oracle.js')).benchOracle(),
  objectives: async () => [(await import('./solver.js')).benchObjectives(), (await import('./objectives.js')).benchObjectiveWalk()],
  solver: async () => {
    const solver = await import('./solver.js');
    return [solver.benchSolves(), solver.benchBoundaryOptima()];
  },
  'random-suite': async () => (await import('./random-suite.js')).benchRandomSuite(),
  'finite-size': async () => (await import('./finite-size.js')).benchFiniteSize(),
  decoy: async () => (await import('./decoy.js')).benchDecoy(),
  // Loaded by name: the service benchmark starts servers and worker threads only when asked for.
  cli: async () => (await import('./cli.js')).benchCli(),
  service: async () => ((await import(SERVICE_MODULE)) as { benchService: () => Promise<BenchTable[]> }).benchService(),
  cluster: async () => (await import('./cluster.js')).benchCluster(),
};

function markdown(table: BenchTable): string {
  const lines = [`### ${table.title}`, '', `| ${table.columns.join(' | ')} |`, `|${table.columns.map(() => '---').join('|')}|`];
  for (const row of table.rows) lines.push(`| ${row.join(' | ')} |`);
  return `${lines.join('\n')}\n`;
}

const only = process.argv.indexOf('--only');
const names = only >= 0 ? [process.argv[only + 1]] : Object.keys(SECTIONS);
for (const name of names) {
  const section = SECTIONS[name];
  if (!section) {
    process.stderr.write(`bench: unknown section ${JSON.stringify(name)}; known: ${Object.keys(SECTIONS).join(', ')}\n`);
    process.exitCode = 1;
    break;
  }
  for (const table of await section()) process.stdout.write(`${markdown(table)}\n`);
}
