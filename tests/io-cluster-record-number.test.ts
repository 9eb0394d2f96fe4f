// `jetlag cluster` names a record too broken to give its event number the way `jetlag run`
// and `jetlag export` do: by its 0-based position among the event records, with its offset.

import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main as clusterMain } from '../host/cli/commands/cluster.js';
import { main as exportMain } from '../host/cli/commands/export.js';
import { EventFileWriter } from '../host/output/record-writer.js';
import { DEFAULT_GRID } from '../host/types.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('record-number');

async function runCommand(command: typeof clusterMain, argv: string[]) {
  const fake = fakeIo();
  const code = await command(argv, fake.io);
  return { code, stderr: fake.stderr() };
}

/** three invented events; the second record's first byte becomes a key with wire type 7 */
async function fileWithBrokenSecondRecord(): Promise<{ path: string; brokenOffset: number }> {
  const path = join(dir, 'broken.jetlag');
  const writer = await EventFileWriter.open(path, { grid: DEFAULT_GRID, producer: 'test', label: 'invented' });
  for (let event = 0; event < 3; event++) {
    await writer.writeEvent({ event, towerIndex: Int32Array.of(100 + event), towerEt: Float64Array.of(5 + event) });
  }
  await writer.close();
  const bytes = readFileSync(path);
  const starts: number[] = [];
  for (let pos = 0; pos < bytes.length;) {
    starts.push(pos);
    let length = 0;
    let scale = 1;
    let byte: number;
    do { byte = bytes[pos++]; length += (byte & 0x7f) * scale; scale *= 128; } while (byte >= 0x80);
    if (starts.length === 3) bytes[pos] = 0x0f; // record 0 is the header; this is event record 1
    pos += length;
  }
  writeFileSync(path, bytes);
  return { path, brokenOffset: starts[2] };
}

describe('a record too broken to name its event', () => {
  it('is named by cluster as the same 0-based record as by export', async () => {
    const { path, brokenOffset } = await fileWithBrokenSecondRecord();
    const cluster = await runCommand(clusterMain, [path, '--engine', 'reference', '--format', 'jsonl', '-q']);
    const exported = await runCommand(exportMain, [path, '--format', 'jsonl']);
    const named = (text: string) => /record (\d+), byte (\d+)/.exec(text)?.slice(1).map(Number);
    expect(named(cluster.stderr)).toEqual([1, brokenOffset]);
    expect(named(cluster.stderr)).toEqual(named(exported.stderr));
  });
});
