#!/usr/bin/env node
// The renyi-bound command line. Each command lives in its own module exporting register(program); only the
// module of the command being run is loaded (all of them for the overall help), so start-up stays short.
import nodeModule from 'node:module';
import { Command } from './command-line.js';
import { packageVersion } from './io.js';

// Node ≥ 22.1 keeps compiled code of the modules loaded from here on between runs; Node 20 has no such cache.
(nodeModule as { enableCompileCache?: () => unknown }).enableCompileCache?.();

type CommandModule = { register(program: Command): void };

/** Every command by name, in the order the overall help lists them. */
const COMMANDS: Readonly<Record<string, () => Promise<CommandModule>>> = {
  example: () => import('./example.js'),
  evaluate: () => import('./evaluate.js'),
  solve: () => import('./solve.js'),
  verify: () => import('./verify.js'),
  serve: () => import('./serve.js'),
  sweep: () => import('./sweep.js'),
  health: () => import('./health.js'),
  demo: () => import('./demo.js'),
  assemble: () => import('./assemble.js'),
  cache: () => import('./cache.js'),
  'key-length': () => import('./key-length.js'),
  'decoy-rate': () => import('./decoy-rate.js'),
};

const program = new Command('renyi-bound')
  .description('certified lower bounds on single-round conditional Rényi entropies for QKD security proofs')
  .version(packageVersion());

const named = process.argv[2];
const loaders = named !== undefined && Object.hasOwn(COMMANDS, named) ? [COMMANDS[named]] : Object.values(COMMANDS);
for (const module of await Promise.all(loaders.map((load) => load()))) module.register(program);

await program.run(process.argv.slice(2));
