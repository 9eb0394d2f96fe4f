// The host's folders follow the data path, and imports point one way (DEVELOPERS.md, "Where
// things live"): a folder may import from folders below it in LAYERS, never from one above.
// The reference must stay independent of the engine side, so it imports nothing from it.

import { readdirSync, readFileSync, statSync } from 'node:fs';
import { dirname, join, relative, resolve } from 'node:path';
import { describe, expect, it } from 'vitest';

const hostRoot = join(import.meta.dirname, '..', 'host');

/** From the top of the data path to the bottom; a folder imports only from later entries (or its own). */
const LAYERS: readonly string[] = ['cli', 'report', 'pipeline', 'measure', 'validate', 'generator', 'output', 'input', 'formats', 'clustering', '.'];

function hostFiles(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const path = join(dir, name);
    if (statSync(path).isDirectory()) return hostFiles(path);
    return name.endsWith('.ts') ? [path] : [];
  });
}

/** The folder of a host file, by its first path segment below host/ ('.' for top-level files). */
function layerOf(file: string): string {
  const parts = relative(hostRoot, file).split(/[\\/]/);
  return parts.length === 1 ? '.' : parts[0];
}

function localImports(file: string): string[] {
  const text = readFileSync(file, 'utf8');
  const found: string[] = [];
  for (const match of text.matchAll(/(?:from\s+|import\s+|import\(\s*)['"](\.{1,2}\/[^'"]+)['"]/g)) {
    found.push(resolve(dirname(file), match[1]).replace(/\.js$/, '.ts'));
  }
  return found;
}

describe('host layout', () => {
  const files = hostFiles(hostRoot);

  it('knows the folder of every host file', () => {
    const unknown = files.filter((file) => !LAYERS.includes(layerOf(file))).map((file) => relative(hostRoot, file));
    expect(unknown).toEqual([]);
  });

  it('has no import from a folder above the importing one', () => {
    const upward: string[] = [];
    for (const file of files) {
      const own = LAYERS.indexOf(layerOf(file));
      for (const target of localImports(file)) {
        if (!target.startsWith(hostRoot)) continue;
        const theirs = LAYERS.indexOf(layerOf(target));
        if (theirs < own) upward.push(`${relative(hostRoot, file)} -> ${relative(hostRoot, target)}`);
      }
    }
    expect(upward).toEqual([]);
  });

  it('keeps the reference free of the engine side', () => {
    const reference = join(hostRoot, 'clustering', 'reference.ts');
    const engineSide = localImports(reference).filter((target) => /engine|emulate|clusterers/.test(target));
    expect(engineSide).toEqual([]);
  });

  it('keeps every host file inside host/ free of imports from tests/ or bench/', () => {
    const outside = files.flatMap((file) =>
      localImports(file)
        .filter((target) => !target.startsWith(hostRoot))
        .map((target) => `${relative(hostRoot, file)} -> ${target}`),
    );
    expect(outside).toEqual([]);
  });
});
