// Output files that cannot be written: one line naming the output (not its temporary name),
// and no temporary file left behind, whether the directory is missing or the target is a
// directory (found only at the final rename).

import { mkdirSync, mkdtempSync, readdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { OutputFile } from '../host/output/record-writer.js';

describe('an output that cannot be written', () => {
  it('in a missing directory is named with the path asked for', async () => {
    const path = join(tmpdir(), 'jetlag-no-such-directory-xyz', 'out.jets');
    await expect(OutputFile.open(path)).rejects.toThrow(`cannot write ${path}: no such directory`);
  });

  it('onto a directory fails at close and leaves no temporary file', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'jetlag-writer-failure-'));
    const target = join(dir, 'target');
    mkdirSync(target);
    const out = await OutputFile.open(target);
    await out.write(Uint8Array.of(1, 2, 3));
    await expect(out.close()).rejects.toThrow(`cannot write ${target}`);
    expect(readdirSync(dir)).toEqual(['target']);
  });
});
