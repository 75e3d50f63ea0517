// The command-line grammar of renyi-bound on Node's own argument parser (util.parseArgs): each command declares its
// arguments and options with their help text; parsing, the help screens and usage errors (exit 1) live here.
import { parseArgs } from 'node:util';

/** Exit code of a usage error (unknown command or option, missing argument), as for bad input. */
const EXIT_USAGE = 1;
/** Help is wrapped to the terminal, or to this many columns when the output is not a terminal. */
const DEFAULT_HELP_WIDTH = 80;
/** Below this many columns for the descriptions, they are not wrapped at all (narrow terminals). */
const MIN_WRAP_WIDTH = 40;

export interface CommandOption {
  /** As written in the help: `--alpha <a>`, `--fit`, `--no-disk-cache`. */
  readonly flags: string;
  /** The option itself: `--alpha`, `--fit`, `--no-disk-cache`. */
  readonly long: string;
  /** Its key in the options object an action receives: `alpha`, `fit`, `diskCache` (camel case, no `no-`). */
  readonly key: string;
  readonly description: string;
  readonly takesValue: boolean;
  /** `--no-x`: x is true unless this is given. */
  readonly negated: boolean;
  /** May be given several times; the action receives every value in order. */
  readonly repeatable: boolean;
  readonly required: boolean;
  readonly defaultValue?: string;
}

interface CommandArgument {
  readonly name: string;
  readonly required: boolean;
  readonly description: string;
}

/** An action receives the declared arguments in order, then the options object and the command (each types its own). */
type Action = (...values: any[]) => void | Promise<void>;

function camelCase(name: string): string {
  return name.replace(/-([a-z])/g, (_, c: string) => c.toUpperCase());
}

/** Greedy word wrap to `width` columns, as help screens are usually wrapped (lines break between words only). */
function wrap(text: string, width: number): string {
  if (width < MIN_WRAP_WIDTH) return text;
  const lines: string[] = [];
  for (const paragraph of text.split('\n')) {
    const words = paragraph.match(/\s*\S+/g) ?? [''];
    let line = words[0];
    for (const word of words.slice(1)) {
      if (line.length + word.length <= width) line += word;
      else {
        lines.push(line);
        line = word.trimStart();
      }
    }
    lines.push(line);
  }
  return lines.join('\n');
}

function usageError(message: string): void {
  process.stderr.write(`error: ${message}\n`);
  process.exitCode = EXIT_USAGE;
}

export class Command {
  /** Its subcommands, in the order the help lists them. */
  readonly commands: Command[] = [];
  readonly options: CommandOption[] = [];
  private readonly declaredArguments: CommandArgument[] = [];
  private summary = '';
  private versionText?: string;
  private handler?: Action;
  /** Keys of the options given on the command line in the last run (the others hold their defaults). */
  private given = new Set<string>();

  constructor(
    readonly name: string,
    private readonly parent?: Command,
  ) {}

  /** A subcommand, declared on the object returned. */
  command(name: string): Command {
    const command = new Command(name, this);
    this.commands.push(command);
    return command;
  }

  description(text: string): this {
    this.summary = text;
    return this;
  }

  /** `-V, --version` prints this. */
  version(text: string): this {
    this.versionText = text;
    return this;
  }

  /** `<name>` (required) or `[name]` (optional), in the order they are given. */
  argument(spec: string, description: string): this {
    this.declaredArguments.push({ name: spec.slice(1, -1), required: spec.startsWith('<'), description });
    return this;
  }

  option(flags: string, description: string, defaultValue?: string): this {
    return this.addOption(flags, description, { defaultValue });
  }

  requiredOption(flags: string, description: string): this {
    return this.addOption(flags, description, { required: true });
  }

  /** An option that may be given several times (the action receives an array, empty when never given). */
  repeatableOption(flags: string, description: string): this {
    return this.addOption(flags, description, { repeatable: true });
  }

  action(handler: Action): this {
    this.handler = handler;
    return this;
  }

  /** Whether the option (by its key) was given on the command line rather than left at its default. */
  isGiven(key: string): boolean {
    return this.given.has(key);
  }

  /** Parses `argv` (the words after the program name) and runs the command it names; usage errors exit 1. */
  async run(argv: readonly string[]): Promise<void> {
    if (this.commands.length > 0) return this.dispatch(argv);
    const words = argv.indexOf('--') < 0 ? argv : argv.slice(0, argv.indexOf('--'));
    if (words.includes('-h') || words.includes('--help')) return this.printHelp();
    const args = this.joinOptionValues(argv);
    if (args === undefined) return;
    let parsed: ReturnType<typeof parseArgs>;
    try {
      parsed = parseArgs({
        args,
        allowPositionals: true,
        strict: true,
        options: Object.fromEntries(
          this.options.map((o) => [o.long.slice(2), { type: o.takesValue ? 'string' : 'boolean', multiple: o.repeatable }] as const),
        ),
      });
    } catch (error) {
      return usageError(parseArgsMessage(error));
    }
    const values = parsed.values as Record<string, string | boolean | string[] | undefined>;
    const options: Record<string, string | boolean | string[]> = {};
    this.given = new Set();
    for (const option of this.options) {
      const value = values[option.long.slice(2)];
      if (value !== undefined) {
        this.given.add(option.key);
        options[option.key] = option.negated ? false : value;
      } else if (option.required) {
        return usageError(`required option '${option.flags}' not specified`);
      } else if (option.negated) options[option.key] = true;
      else if (option.repeatable) options[option.key] = [];
      else if (option.defaultValue !== undefined) options[option.key] = option.defaultValue;
    }
    const positionals = parsed.positionals;
    const missing = this.declaredArguments.find((a, i) => a.required && positionals[i] === undefined);
    if (missing) return usageError(`missing required argument '${missing.name}'`);
    if (positionals.length > this.declaredArguments.length) {
      const expected = this.declaredArguments.length;
      return usageError(
        `too many arguments for '${this.name}'. Expected ${expected} argument${expected === 1 ? '' : 's'} but got ${positionals.length}.`,
      );
    }
    const argumentValues = this.declaredArguments.map((_, i) => positionals[i]);
    await this.handler?.(...argumentValues, options, this);
  }

  /** The help screen: usage, description, arguments, options and subcommands. */
  helpText(width = helpWidth(process.stdout)): string {
    const usage = this.commands.length > 0 ? '[options] [command]' : ['[options]', ...this.argumentSpecs()].join(' ');
    const options: Array<[string, string]> = this.options.map((o) => [
      o.flags,
      o.defaultValue === undefined ? o.description : `${o.description} (default: ${JSON.stringify(o.defaultValue)})`,
    ]);
    if (this.versionText !== undefined) options.push(['-V, --version', 'output the version number']);
    options.push(['-h, --help', 'display help for command']);
    const commands: Array<[string, string]> = this.commands.map((c) => [
      [c.name, ...(c.options.length > 0 ? ['[options]'] : []), ...c.argumentSpecs()].join(' '),
      c.summary,
    ]);
    if (commands.length > 0) commands.push(['help [command]', 'display help for command']);
    const sections: Array<[string, Array<[string, string]>]> = [
      ['Arguments:', this.declaredArguments.map((a) => [a.name, a.description])],
      ['Options:', options],
      ['Commands:', commands],
    ];
    const termWidth = Math.max(...sections.flatMap(([, items]) => items.map(([term]) => term.length)));
    const lines = [`Usage: ${this.path()} ${usage}`, ''];
    if (this.summary !== '') lines.push(wrap(this.summary, width), '');
    for (const [title, items] of sections) {
      if (items.length === 0) continue;
      lines.push(title);
      for (const [term, description] of items) {
        const text = wrap(description, width - termWidth - 4).replace(/\n/g, `\n${' '.repeat(termWidth + 4)}`);
        lines.push(`  ${term.padEnd(termWidth)}  ${text}`);
      }
      lines.push('');
    }
    return lines.join('\n');
  }

  private path(): string {
    return this.parent ? `${this.parent.path()} ${this.name}` : this.name;
  }

  private argumentSpecs(): string[] {
    return this.declaredArguments.map((a) => (a.required ? `<${a.name}>` : `[${a.name}]`));
  }

  private addOption(flags: string, description: string, how: { defaultValue?: string; required?: boolean; repeatable?: boolean }): this {
    const [long, value] = flags.split(' ');
    const negated = long.startsWith('--no-');
    this.options.push({
      flags,
      long,
      key: camelCase(long.slice(negated ? 5 : 2)),
      description,
      takesValue: value !== undefined,
      negated,
      repeatable: how.repeatable === true,
      required: how.required === true,
      defaultValue: how.defaultValue,
    });
    return this;
  }

  /** A command of commands: the first word names the subcommand (or asks for help or the version). */
  private async dispatch(argv: readonly string[]): Promise<void> {
    const [first, ...rest] = argv;
    if (first === undefined) {
      // No command: the help, on standard error, as a usage error.
      process.stderr.write(this.helpText(helpWidth(process.stderr)));
      process.exitCode = EXIT_USAGE;
      return;
    }
    if (first === '-h' || first === '--help') return this.printHelp();
    if (this.versionText !== undefined && (first === '-V' || first === '--version')) {
      process.stdout.write(`${this.versionText}\n`);
      return;
    }
    if (first === 'help') {
      const target = rest[0] === undefined ? this : this.commands.find((c) => c.name === rest[0]);
      return target === undefined ? usageError(`unknown command '${rest[0]}'`) : target.printHelp();
    }
    if (first.startsWith('-')) return usageError(`unknown option '${first}'`);
    const command = this.commands.find((c) => c.name === first);
    if (command === undefined) return usageError(`unknown command '${first}'`);
    return command.run(rest);
  }

  private printHelp(): void {
    process.stdout.write(this.helpText());
  }

  /**
   * `--alpha 1.5` becomes `--alpha=1.5`, so that a value may start with a dash (`--gap -1` is then reported by
   * the option's own check rather than taken for an option). Undefined, with the error reported, when the last
   * word is an option that needs a value.
   */
  private joinOptionValues(argv: readonly string[]): string[] | undefined {
    const args: string[] = [];
    for (let i = 0; i < argv.length; i++) {
      if (argv[i] === '--') return [...args, ...argv.slice(i)];
      const option = this.options.find((o) => o.takesValue && o.long === argv[i]);
      if (option === undefined) args.push(argv[i]);
      else if (i + 1 < argv.length) args.push(`${argv[i]}=${argv[++i]}`);
      else return void usageError(`option '${option.flags}' argument missing`);
    }
    return args;
  }
}

function helpWidth(stream: NodeJS.WriteStream): number {
  return stream.isTTY && stream.columns > 0 ? stream.columns : DEFAULT_HELP_WIDTH;
}

/** util.parseArgs's errors in the words of this command line's other usage errors. */
function parseArgsMessage(error: unknown): string {
  const { code, message } = error as { code?: string; message: string };
  const option = /'([^']+)'/.exec(message)?.[1];
  if (code === 'ERR_PARSE_ARGS_UNKNOWN_OPTION' && option !== undefined) return `unknown option '${option}'`;
  if (code === 'ERR_PARSE_ARGS_INVALID_OPTION_VALUE' && option !== undefined && /does not take an argument/.test(message)) {
    return `option '${option}' takes no value`;
  }
  return message;
}
