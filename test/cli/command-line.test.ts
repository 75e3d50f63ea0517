// The command-line grammar (src/cli/command-line.ts, over Node's util.parseArgs): what an action receives, the help
// screens, and the usage errors scripts rely on (one `error: …` line on standard error, exit 1).
import { afterEach, describe, expect, it, vi } from 'vitest';
import { Command } from '../../src/cli/command-line.js';

afterEach(() => {
  process.exitCode = undefined;
});

/** A program with one command of every kind of option, run in process; what the action got and what was printed. */
async function run(args: string[]) {
  const calls: unknown[][] = [];
  const program = new Command('tool').description('a test program').version('1.2.3');
  program
    .command('go')
    .description('go somewhere')
    .argument('<from>', 'start')
    .argument('[to]', 'end')
    .requiredOption('--speed <v>', 'how fast')
    .option('--mode <m>', 'how', 'walk')
    .option('--quiet', 'say nothing')
    .option('--no-cache', 'keep nothing')
    .repeatableOption('--set <name=value>', 'a setting (repeatable)')
    .action((from: string, to: string | undefined, options: Record<string, unknown>, command: Command) => {
      calls.push([from, to, options, command.isGiven('mode')]);
    });
  const group = program.command('store').description('stored things');
  group.command('list').description('list them').option('--all', 'every one').action(() => {
    calls.push(['list']);
  });
  let stdout = '';
  let stderr = '';
  vi.spyOn(process.stdout, 'write').mockImplementation((chunk) => ((stdout += String(chunk)), true));
  vi.spyOn(process.stderr, 'write').mockImplementation((chunk) => ((stderr += String(chunk)), true));
  process.exitCode = undefined;
  try {
    await program.run(args);
  } finally {
    vi.restoreAllMocks();
  }
  const status = Number(process.exitCode ?? 0);
  process.exitCode = undefined;
  return { calls, stdout, stderr, status };
}

describe('command line', () => {
  it('passes arguments, option values, defaults, negations and repeated options to the action', async () => {
    const { calls, status } = await run(['go', 'a', '--speed', '-3', '--set', 'x=1', '--set=y=2', '--no-cache', '--quiet']);
    expect(status).toBe(0);
    expect(calls).toEqual([['a', undefined, { speed: '-3', mode: 'walk', quiet: true, cache: false, set: ['x=1', 'y=2'] }, false]]);
    const second = await run(['go', 'a', 'b', '--speed=1', '--mode', 'run']);
    expect(second.calls).toEqual([['a', 'b', { speed: '1', mode: 'run', cache: true, set: [] }, true]]);
  });

  it('runs a subcommand of a command', async () => {
    expect((await run(['store', 'list', '--all'])).calls).toEqual([['list']]);
  });

  it.each([
    [['go', 'a'], "error: required option '--speed <v>' not specified\n"],
    [['go', '--speed', '1'], "error: missing required argument 'from'\n"],
    [['go', 'a', 'b', 'c', '--speed', '1'], "error: too many arguments for 'go'. Expected 2 arguments but got 3.\n"],
    [['go', 'a', '--speed', '1', '--fast'], "error: unknown option '--fast'\n"],
    [['go', 'a', '--speed'], "error: option '--speed <v>' argument missing\n"],
    [['go', 'a', '--speed', '1', '--quiet=yes'], "error: option '--quiet' takes no value\n"],
    [['fly'], "error: unknown command 'fly'\n"],
    [['--fast'], "error: unknown option '--fast'\n"],
    [['store', 'drop'], "error: unknown command 'drop'\n"],
  ])('%j is a usage error: one line, exit 1, the action not run', async (args, message) => {
    const { calls, stderr, status } = await run(args);
    expect({ calls, stderr, status }).toEqual({ calls: [], stderr: message, status: 1 });
  });

  it('prints the version, and help per command on standard output (exit 0), even next to a bad option', async () => {
    expect(await run(['--version'])).toMatchObject({ stdout: '1.2.3\n', status: 0 });
    const help = await run(['go', '--fast', '--help']);
    expect(help.status).toBe(0);
    expect(help.stdout).toBe(
      [
        'Usage: tool go [options] <from> [to]',
        '',
        'go somewhere',
        '',
        'Arguments:',
        '  from                start',
        '  to                  end',
        '',
        'Options:',
        '  --speed <v>         how fast',
        '  --mode <m>          how (default: "walk")',
        '  --quiet             say nothing',
        '  --no-cache          keep nothing',
        '  --set <name=value>  a setting (repeatable)',
        '  -h, --help          display help for command',
        '',
      ].join('\n'),
    );
    expect((await run(['help', 'go'])).stdout).toBe(help.stdout);
    expect((await run(['store', 'list', '-h'])).stdout).toMatch(/^Usage: tool store list \[options\]\n/);
  });

  it('lists the commands in the overall help; without a command it prints that help on standard error, exit 1', async () => {
    const help = await run(['--help']);
    expect(help.stdout).toMatch(/^Usage: tool \[options\] \[command\]\n\na test program\n/);
    expect(help.stdout).toMatch(/\n {2}go \[options\] <from> \[to\] +go somewhere\n {2}store +stored things\n {2}help \[command\] +display help/);
    expect(await run([])).toMatchObject({ stdout: '', stderr: help.stdout, status: 1 });
  });

  it('wraps long descriptions under their column', () => {
    const program = new Command('tool');
    program.command('x').option('--long-option <v>', 'word '.repeat(30).trim()).action(() => {});
    const lines = program.commands[0].helpText(80).split('\n');
    const options = lines.slice(lines.indexOf('Options:') + 1, -2);
    expect(options.every((line) => line.length <= 80)).toBe(true);
    expect(options.slice(1).every((line) => line.startsWith(' '.repeat(21)))).toBe(true);
    expect(options.join(' ').replace(/\s+/g, ' ').trim()).toBe(`--long-option <v> ${'word '.repeat(30).trim()}`);
  });
});
