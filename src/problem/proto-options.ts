// Where the .proto files live and how to load them; shared by every loader so that runtime and tests agree.
import { existsSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

/**
 * Options for @grpc/proto-loader / protobufjs: lowerCamelCase field names (the protobuf JSON mapping),
 * 64-bit integers as strings, enums by name, unset fields filled with defaults, oneofs named.
 */
export const PROTO_LOADER_OPTIONS = {
  keepCase: false,
  longs: String,
  enums: String,
  defaults: true,
  oneofs: true,
} as const;

/** The problem description file, relative to the proto directory. */
export const PROBLEM_PROTO_FILE = 'renyibound/v1/problem.proto';

/** The fully qualified protobuf package name of every renyi-bound message. */
export const PROTO_PACKAGE = 'renyibound.v1';

/**
 * The package root: the nearest directory at or above `start` holding package.json. Works from src/ (tests run
 * the TypeScript sources) and from dist/ (the built CLI and service).
 */
export function packageRoot(start: string = dirname(fileURLToPath(import.meta.url))): string {
  let directory = start;
  for (;;) {
    if (existsSync(join(directory, 'package.json'))) return directory;
    const parent = dirname(directory);
    if (parent === directory) throw new Error(`no package.json found at or above ${start}`);
    directory = parent;
  }
}

/** The directory holding the .proto files (pass it as an include directory to the loader). */
export function protoDirectory(): string {
  return join(packageRoot(), 'proto');
}
