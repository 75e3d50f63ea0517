// Loads the service contract from proto/ with the project's one set of proto-loader options.
//
// The TypeScript types in ./generated come from the same files and the same options (type-generation.ts);
// regenerate with `npx tsx src/service/type-generation.ts` after editing a .proto file
// (test/service/generated-types.test.ts fails when they drift).
import * as grpc from '@grpc/grpc-js';
import * as protoLoader from '@grpc/proto-loader';
import { PROTO_LOADER_OPTIONS, protoDirectory } from '../problem/proto-options.js';
import type { ProtoGrpcType } from './generated/service.js';

/** The service description file, relative to the proto directory. */
export const SERVICE_PROTO_FILE = 'renyibound/v1/service.proto';
/** Fully qualified name of the service (also its name in the health service). */
export const SERVICE_NAME = 'renyibound.v1.RenyiBound';

let cachedDefinition: protoLoader.PackageDefinition | undefined;

/** The package definition of service.proto and everything it imports (problem.proto). */
export function loadServiceDefinition(): protoLoader.PackageDefinition {
  cachedDefinition ??= protoLoader.loadSync(SERVICE_PROTO_FILE, {
    ...PROTO_LOADER_OPTIONS,
    includeDirs: [protoDirectory()],
  });
  return cachedDefinition;
}

/** The grpc-js object tree (constructors for clients, the service definition for servers). */
export function loadServicePackage(): ProtoGrpcType {
  return grpc.loadPackageDefinition(loadServiceDefinition()) as unknown as ProtoGrpcType;
}
