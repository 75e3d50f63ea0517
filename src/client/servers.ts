// Where a client connects: one address, a comma-separated list, or a DNS name resolving to many replicas (a
// Kubernetes headless Service), as the gRPC target that spreads calls over them.
import { lookup } from 'node:dns/promises';
import { isIP } from 'node:net';
import { ValidationError } from '../problem/errors.js';

/** The servers a client was pointed at, and the gRPC target that spreads calls over them. */
export interface ServerSet {
  /** As the user wrote it (for messages). */
  text: string;
  /** The host:port entries. */
  entries: string[];
  /** The gRPC target: `ipv4:`/`ipv6:` address lists, or `dns:` for a name (re-resolved by gRPC). */
  target: string;
}

const HOST_PORT = /^(\[[0-9a-fA-F:.]+\]|[A-Za-z0-9.-]+):(\d{1,5})$/;

/** Splits `host:port` (IPv6 hosts in brackets). */
function hostAndPort(entry: string, field: string): { host: string; port: number } {
  const match = HOST_PORT.exec(entry);
  const port = match ? Number(match[2]) : NaN;
  if (!match || port < 1 || port > 65535) {
    throw new ValidationError(field, `must be host:port, a comma-separated list of them, or dns:///name:port (got ${JSON.stringify(entry)})`);
  }
  return { host: match[1].replace(/^\[|\]$/g, ''), port };
}

function ipTarget(addresses: { host: string; port: number }[]): string {
  const v4 = addresses.every((a) => isIP(a.host) === 4);
  const v6 = addresses.every((a) => isIP(a.host) === 6);
  if (v4) return `ipv4:${addresses.map((a) => `${a.host}:${a.port}`).join(',')}`;
  if (v6) return `ipv6:${addresses.map((a) => `[${a.host}]:${a.port}`).join(',')}`;
  throw new Error('mixed address families');
}

/**
 * Parses `--server`: `host:port`, `a:p,b:p,…`, or `dns:///name:port`. A single name is left to gRPC's DNS
 * resolver, which returns every address of the name and re-resolves when a connection fails, so replicas that
 * come and go behind a headless Service are followed. Names inside a list are resolved here, once.
 */
export function parseServers(text: string, field = '--server'): ServerSet {
  const trimmed = text.trim();
  if (trimmed.startsWith('dns:')) {
    const name = trimmed.replace(/^dns:(\/\/[^/]*\/)?/, '');
    hostAndPort(name, field);
    return { text: trimmed, entries: [name], target: `dns:${name}` };
  }
  const entries = trimmed.split(',').map((entry) => entry.trim()).filter((entry) => entry !== '');
  if (entries.length === 0) throw new ValidationError(field, 'names no server');
  const addresses = entries.map((entry) => hostAndPort(entry, field));
  if (addresses.every((a) => isIP(a.host) !== 0)) {
    try {
      return { text: trimmed, entries, target: ipTarget(addresses) };
    } catch {
      throw new ValidationError(field, 'mixes IPv4 and IPv6 addresses');
    }
  }
  if (entries.length === 1) return { text: trimmed, entries, target: `dns:${entries[0]}` };
  return { text: trimmed, entries, target: '' };
}

/** Resolves the names of a list (a single name stays with gRPC's resolver); the number of replicas found. */
export async function resolveServers(servers: ServerSet): Promise<{ servers: ServerSet; replicas: number }> {
  const resolved: { host: string; port: number }[] = [];
  for (const entry of servers.entries) {
    const { host, port } = hostAndPort(entry, '--server');
    if (isIP(host) !== 0) resolved.push({ host, port });
    else {
      try {
        for (const address of await lookup(host, { all: true, family: 4 })) resolved.push({ host: address.address, port });
      } catch (error) {
        if (servers.target !== '') continue;
        throw new ValidationError(servers.text, `cannot resolve ${host} (${(error as NodeJS.ErrnoException).code ?? (error as Error).message})`);
      }
    }
  }
  const unique = [...new Map(resolved.map((a) => [`${a.host}:${a.port}`, a])).values()];
  if (servers.target !== '') return { servers, replicas: Math.max(1, unique.length) };
  return { servers: { ...servers, target: ipTarget(unique) }, replicas: unique.length };
}

