// Output files that cannot be written: one line naming the output (not its temporary name),
// and no temporary file left behind, whether the directory is missing or the target is a
// directory (one there at the start is refused when opened, tests/output-safety.test.ts; one
// made during the writing is found only at the final rename).

import { mkdirSync, readdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { OutputFile } from '../host/output/output-file.js';
import { tempDirForTest } from './support/temp-dir.js';

describe('an output that cannot be written', () => {
  it('in a missing directory is named with the path asked for', async () => {
    const path = join(tmpdir(), 'jetlag-no-such-directory-xyz', 'out.jets');
    await expect(OutputFile.open(path)).rejects.toThrow(`cannot write ${path}: no such directory`);
  });

  it('onto a directory made while it is written fails at close and leaves no temporary file', async () => {
    const dir = tempDirForTest('writer-failure');
    const target = join(dir, 'target');
    const out = await OutputFile.open(target, { force: true });
    await out.write(Uint8Array.of(1, 2, 3));
    mkdirSync(target);
    await expect(out.close()).rejects.toThrow(`cannot write ${target}`);
    expect(readdirSync(dir)).toEqual(['target']);
  });
});
