#!/usr/bin/env node
// The renyi-bound command line. Each command lives in its own module exporting register(program).
import { Command } from 'commander';
import { packageVersion } from './io.js';
import { register as registerExample } from './example.js';
import { register as registerEvaluate } from './evaluate.js';
import { register as registerSolve } from './solve.js';
import { register as registerVerify } from './verify.js';

const program = new Command('renyi-bound')
  .description('certified lower bounds on single-round conditional Rényi entropies for QKD security proofs')
  .version(packageVersion());

registerExample(program);
registerEvaluate(program);
registerSolve(program);
registerVerify(program);

await program.parseAsync(process.argv);
