// Outputs that are not regular files are written in place and survive; existing files are
// refused without force and replaced with it; no temporary name is left behind.

import { execFileSync } from 'node:child_process';
import { createReadStream, lstatSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { OutputFile, writeTextFile } from '../host/output/output-file.js';
import { heldTemporaries } from '../host/output/temporaries.js';
import { tempDirForTest } from './support/temp-dir.js';

/** mknod a character device with the numbers of /dev/null (1, 3 on Linux), or say why not. */
function makeNullDevice(path: string): string | null {
  try {
    execFileSync('mknod', [path, 'c', '1', '3'], { stdio: 'pipe' });
    return null;
  } catch (error) {
    return String((error as { stderr?: Buffer }).stderr ?? (error as Error).message).trim();
  }
}

/** Node has no mkfifo of its own */
function mkfifo(path: string): void {
  execFileSync('mkfifo', [path]);
}

describe('an output that is not a regular file', () => {
  it('a character device of the test\'s own is written to and stays a character device', async (context) => {
    const dir = tempDirForTest('output-device');
    const device = join(dir, 'null');
    const refused = makeNullDevice(device);
    if (refused !== null) {
      console.log(`skipped: mknod of a character device is not permitted here: ${refused}`);
      context.skip();
    }
    await writeTextFile(device, '{"summary": true}\n');
    const out = await OutputFile.open(device, { gzip: true });
    await out.write(new Uint8Array(100_000).fill(7));
    await out.close();
    const stats = lstatSync(device);
    expect(stats.isCharacterDevice()).toBe(true);
    expect(stats.rdev).toBe(lstatSync('/dev/null').rdev);
    expect(readdirSync(dir)).toEqual(['null']);
  });

  it('a FIFO is written through to its reader and stays a FIFO', async () => {
    const dir = tempDirForTest('output-fifo');
    const fifo = join(dir, 'pipe');
    mkfifo(fifo);
    const received: Buffer[] = [];
    const reader = createReadStream(fifo);
    reader.on('data', (chunk) => received.push(chunk as Buffer));
    const readerDone = new Promise<void>((resolve) => reader.on('end', () => resolve()));
    const out = await OutputFile.open(fifo);
    const bytes = new Uint8Array(300_000).map((_, k) => k % 251);
    const pending = out.write(bytes);
    if (pending) await pending;
    await out.close();
    await readerDone;
    expect(Buffer.concat(received).equals(Buffer.from(bytes))).toBe(true);
    expect(lstatSync(fifo).isFIFO()).toBe(true);
    expect(readdirSync(dir)).toEqual(['pipe']);
  });

  it('a directory is refused when opened, before anything is written', async () => {
    const dir = tempDirForTest('output-directory');
    await expect(OutputFile.open(dir)).rejects.toThrow(`cannot write ${dir}: it is a directory`);
    expect(readdirSync(dir)).toEqual([]);
  });
});

describe('an existing regular file as output', () => {
  it('is refused without force, left as it was, and no temporary stays', async () => {
    const dir = tempDirForTest('output-exists');
    const path = join(dir, 'summary.json');
    writeFileSync(path, 'old\n');
    await expect(writeTextFile(path, 'new\n')).rejects.toThrow(`cannot write ${path}: the file exists (give --force to replace it)`);
    expect(readFileSync(path, 'utf8')).toBe('old\n');
    expect(readdirSync(dir)).toEqual(['summary.json']);
  });

  it('is replaced with force', async () => {
    const dir = tempDirForTest('output-force');
    const path = join(dir, 'summary.json');
    writeFileSync(path, 'old\n');
    await writeTextFile(path, 'new\n', { force: true });
    expect(readFileSync(path, 'utf8')).toBe('new\n');
    expect(readdirSync(dir)).toEqual(['summary.json']);
  });

  it('that appears while the output is written is not replaced without force', async () => {
    const dir = tempDirForTest('output-appears');
    const path = join(dir, 'out.jets');
    const out = await OutputFile.open(path);
    await out.write(Uint8Array.of(1, 2, 3));
    writeFileSync(path, 'someone else\n');
    await expect(out.close()).rejects.toThrow('appeared while it was being written');
    expect(readFileSync(path, 'utf8')).toBe('someone else\n');
    expect(readdirSync(dir)).toEqual(['out.jets']);
    expect(heldTemporaries()).toEqual([]);
  });
});
