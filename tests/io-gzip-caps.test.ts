// Caps on inflating gzip input: a small file that inflates to far more than it should (a gzip
// "bomb", made here from zeros) is refused in one line naming the byte offset in the compressed
// stream and the cap it passed, by the reader and by a command. Invented header.

import { spawnSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { Readable } from 'node:stream';
import { gzipSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { encodeFileHeader } from '../host/formats/file-header.js';
import { openEventSource } from '../host/input/event-source.js';
import type { InflateLimits } from '../host/input/input-chunks.js';
import { DEFAULT_GRID } from '../host/types.js';
import { tempDirForSuite } from './support/temp-dir.js';

const cli = join(import.meta.dirname, '..', 'dist', 'host', 'cli', 'cli.js');
const directory = tempDirForSuite('gzip-caps');

/** length-prefixed bytes, the prefix written by hand (a varint) so as not to share the writer's code */
function framed(body: Uint8Array): Buffer {
  const prefix: number[] = [];
  let length = body.length;
  while (length >= 0x80) { prefix.push((length & 0x7f) | 0x80); length = Math.floor(length / 128); }
  prefix.push(length);
  return Buffer.concat([Buffer.from(prefix), Buffer.from(body)]);
}

/** a valid event file header, then records of `recordMiB` MiB of zeros each, gzip-compressed */
function bomb(records: number, recordMiB: number): Buffer {
  const header = framed(encodeFileHeader({ kind: 'events', formatVersion: 1, grid: { ...DEFAULT_GRID }, producer: 'test', label: 'invented' }));
  const zeros = framed(new Uint8Array(recordMiB << 20));
  return gzipSync(Buffer.concat([header, ...Array.from({ length: records }, () => zeros)]));
}

async function refusal(bytes: Buffer, inflate?: InflateLimits): Promise<string> {
  const source = await openEventSource(Readable.from([bytes]), { fileLabel: 'bomb.jetlag.gz', inflate });
  try {
    for await (const record of source.records) void record;
  } catch (error) {
    return (error as Error).message;
  }
  return '';
}

function compressedOffset(message: string): number {
  return Number(/^bomb\.jetlag\.gz, byte (\d+): /.exec(message)?.[1]);
}

describe('a gzip input', () => {
  const small = bomb(1, 16); // 16 MiB of zeros in about 16 KiB

  it('that inflates past the cap on inflated bytes is refused at a byte of the compressed stream', async () => {
    const message = await refusal(small, { maxInflatedBytes: 1 << 20 });
    expect(message).toMatch(/^bomb\.jetlag\.gz, byte \d+: gzip stream inflates to more than 1048576 bytes, the cap on inflated bytes \(--max-inflated-bytes raises it\); byte counts the compressed stream$/);
    expect(compressedOffset(message)).toBeGreaterThan(0);
    expect(compressedOffset(message)).toBeLessThanOrEqual(small.length);
  });

  it('that inflates more than the ratio allows is refused, past the floor where the ratio is judged', async () => {
    const message = await refusal(small, { maxInflateRatio: 100, ratioFloorBytes: 1 << 20 });
    expect(message).toMatch(/^bomb\.jetlag\.gz, byte \d+: gzip stream inflates \d+ times its compressed size, more than the cap of 100 \(--max-inflate-ratio raises it\); byte counts the compressed stream$/);
  });

  it('is read whole under caps it stays within', async () => {
    expect(await refusal(small, { maxInflatedBytes: 17 << 20, maxInflateRatio: 2000 })).toBe('');
  });

  it('of zeros past 64 MiB is refused by the default ratio cap', async () => {
    const large = bomb(5, 16); // 80 MiB in about 80 KiB
    const message = await refusal(large);
    expect(message).toMatch(/^bomb\.jetlag\.gz, byte \d+: gzip stream inflates \d+ times its compressed size, more than the cap of 100 /);
  });

  it('is refused by a command in one line led by its name, the cap given on the command line', () => {
    const path = join(directory, 'bomb.jetlag.gz');
    writeFileSync(path, small);
    const result = spawnSync(process.execPath, [cli, 'export', path, '--format', 'csv', '--out', '-', '--max-inflated-bytes', '1000000'], { encoding: 'utf8' });
    expect(result.status).toBe(2);
    const lines = result.stderr.trimEnd().split('\n');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(new RegExp(`^jetlag export: ${path.replace(/[.]/g, '\\.')}, byte \\d+: gzip stream inflates to more than 1000000 bytes, the cap on inflated bytes`));
  }, 60_000);
});
