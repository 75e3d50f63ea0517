#!/usr/bin/env node
// The renyi-bound command line. Each command lives in its own module exporting register(program).
import { Command } from 'commander';
import { packageVersion } from './io.js';
import { register as registerExample } from './example.js';
import { register as registerEvaluate } from './evaluate.js';
import { register as registerSolve } from './solve.js';
import { register as registerVerify } from './verify.js';
import { register as registerServe } from './serve.js';
import { register as registerSweep } from './sweep.js';
import { register as registerHealth } from './health.js';
import { register as registerDemo } from './demo.js';
import { register as registerAssemble } from './assemble.js';
import { register as registerCache } from './cache.js';
import { register as registerKeyLength } from './key-length.js';
import { register as registerDecoyRate } from './decoy-rate.js';

const program = new Command('renyi-bound')
  .description('certified lower bounds on single-round conditional Rényi entropies for QKD security proofs')
  .version(packageVersion());

registerExample(program);
registerEvaluate(program);
registerSolve(program);
registerVerify(program);
registerServe(program);
registerSweep(program);
registerHealth(program);
registerDemo(program);
registerAssemble(program);
registerCache(program);
registerKeyLength(program);
registerDecoyRate(program);

await program.parseAsync(process.argv);
