// Shared helpers of the CLI commands: reading JSON input, printing JSON, and turning bad input into exit code 1.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { FieldError, ValidationError } from '../problem/errors.js';
import { packageRoot } from '../problem/proto-options.js';

/** Exit code for bad input (a ValidationError or an unreadable file); the message names the field. */
export const EXIT_BAD_INPUT = 1;

/** The version in package.json. */
export function packageVersion(): string {
  const json = JSON.parse(readFileSync(join(packageRoot(), 'package.json'), 'utf8')) as { version?: unknown };
  return typeof json.version === 'string' ? json.version : '0.0.0';
}

/**
 * Reads and parses a JSON file, or standard input when `source` is '-'. `field` names the argument or option in
 * error messages (for example "problem" or "--state").
 */
export function readJsonInput(source: string, field: string): unknown {
  let text: string;
  try {
    text = source === '-' ? readFileSync(0, 'utf8') : readFileSync(source, 'utf8');
  } catch (error) {
    const reason = error instanceof Error && 'code' in error ? String((error as NodeJS.ErrnoException).code) : String(error);
    throw new ValidationError(field, `cannot read ${source === '-' ? 'standard input' : JSON.stringify(source)} (${reason})`);
  }
  // Editors on some systems save UTF-8 with a byte-order mark; it is not part of the JSON text.
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  try {
    return JSON.parse(text) as unknown;
  } catch (error) {
    throw new ValidationError(field, `is not valid JSON (${error instanceof Error ? error.message : String(error)})`);
  }
}

/** Parses a number given on the command line; `field` names the option. */
export function parseNumberOption(text: string, field: string): number {
  const value = text.trim() === '' ? Number.NaN : Number(text);
  if (!Number.isFinite(value)) throw new ValidationError(field, `must be a finite number (got ${JSON.stringify(text)})`);
  return value;
}

/**
 * Indented JSON with arrays of numbers kept on one line (matrices would otherwise take a line per entry). Only
 * arrays the pretty-printer opened are joined ("[" then a newline), so string contents are never touched.
 */
export function formatJson(value: unknown): string {
  return JSON.stringify(value, null, 2).replace(/\[\n\s*(-?[\d.eE+-]+(?:,\n\s*-?[\d.eE+-]+)*)\n\s*\]/g, (_, inner: string) =>
    `[${inner.split(/,\s*/).join(', ')}]`,
  );
}

/** Prints a value as JSON on standard output. */
export function printJson(value: unknown): void {
  process.stdout.write(`${formatJson(value)}\n`);
}

/** Reports bad input on standard error and sets exit code 1. */
export function reportBadInput(error: FieldError): void {
  process.stderr.write(`renyi-bound: ${error.message}\n`);
  process.exitCode = EXIT_BAD_INPUT;
}

/**
 * Wraps a command action: a FieldError (validation, settings, oracle input) becomes a message on standard error and exit code 1; anything else
 * is a bug and propagates (Node prints the stack and exits non-zero).
 */
export function withInputErrors<A extends unknown[]>(action: (...args: A) => void | Promise<void>): (...args: A) => Promise<void> {
  return async (...args: A) => {
    try {
      await action(...args);
    } catch (error) {
      if (error instanceof FieldError) reportBadInput(error);
      else throw error;
    }
  };
}
