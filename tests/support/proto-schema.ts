// Where proto/jetlag.proto lives, and the schema loaded with protobufjs (reflection). jetlag's
// own readers and writers are hand-written (host/formats/wire.ts); this load is the independent
// check of them in tests and benchmarks. The package root is found by
// walking up from this module, so it works from sources (vitest) and compiled files alike.

import { existsSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import protobuf from 'protobufjs';

const SCHEMA_RELATIVE = join('proto', 'jetlag.proto');

/** Absolute path of proto/jetlag.proto. */
export function protoPath(): string {
  let dir = dirname(fileURLToPath(import.meta.url));
  for (let depth = 0; depth < 6; depth++) {
    const candidate = join(dir, SCHEMA_RELATIVE);
    if (existsSync(candidate) && existsSync(join(dir, 'package.json'))) return candidate;
    const parent = dirname(dir);
    if (parent === dir) break;
    dir = parent;
  }
  throw new Error(`cannot find ${SCHEMA_RELATIVE} above ${fileURLToPath(import.meta.url)}`);
}

let root: protobuf.Root | null = null;

/** The jetlag package of the schema, loaded once. */
export function loadJetlagSchema(): protobuf.Root {
  root ??= protobuf.loadSync(protoPath());
  return root;
}
