// Option parsing shared by the service commands (serve, sweep, health, demo).
import { availableParallelism } from 'node:os';
import { ValidationError } from '../problem/errors.js';
import { parseNumberOption } from './io.js';

/** A non-negative integer option within [minimum, maximum]; `field` names the option in errors. */
export function integerOption(text: string | undefined, field: string, minimum: number, maximum: number): number | undefined {
  if (text === undefined) return undefined;
  const value = parseNumberOption(text, field);
  if (!Number.isInteger(value) || value < minimum || value > maximum) {
    throw new ValidationError(field, `must be an integer in [${minimum}, ${maximum}] (got ${text})`);
  }
  return value;
}

/** Largest thread count accepted on the command line (more than the cores only adds contention). */
export const MAX_WORKERS = 4 * availableParallelism() + 4;

/** host:port (IPv6 hosts in brackets). */
export function serverAddressOption(text: string, field = '--server'): string {
  if (!/^(\[[0-9a-fA-F:.]+\]|[A-Za-z0-9.-]+):\d{1,5}$/.test(text)) {
    throw new ValidationError(field, `must be host:port (got ${JSON.stringify(text)})`);
  }
  return text;
}
