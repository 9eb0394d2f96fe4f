// `jetlag cluster --engine exec:` stopping when its program used up --engine-restarts: the stop
// line's count of events written is the number of records in the output, also when a record
// too broken to give its event number (not written: it has no number to write) came before.
// The program is tests/fixtures/engines/faulty-engine.mjs, mode crash-all.

import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main as clusterMain } from '../host/cli/commands/cluster.js';
import { readRecords } from '../host/input/record-reader.js';
import { EventFileWriter } from '../host/output/record-writer.js';
import { DEFAULT_GRID } from '../host/types.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';

const FIXTURE = join(import.meta.dirname, 'fixtures', 'engines', 'faulty-engine.mjs');
const dir = tempDirForSuite('exec-cluster-stop-count');

/** three invented events; the second record's first byte becomes a key with wire type 7, so it has no event number */
async function fileWithUnnumberedSecondRecord(): Promise<string> {
  const path = join(dir, 'unnumbered.jetlag');
  const writer = await EventFileWriter.open(path, { grid: DEFAULT_GRID, producer: 'test', label: 'invented' });
  for (let event = 0; event < 3; event++) {
    await writer.writeEvent({ event, towerIndex: Int32Array.of(100 + event), towerEt: Float64Array.of(5 + event) });
  }
  await writer.close();
  const bytes = readFileSync(path);
  let records = 0;
  for (let pos = 0; pos < bytes.length;) {
    let length = 0;
    let scale = 1;
    let byte: number;
    do { byte = bytes[pos++]; length += (byte & 0x7f) * scale; scale *= 128; } while (byte >= 0x80);
    if (++records === 3) bytes[pos] = 0x0f; // record 0 is the header; this is event record 1
    pos += length;
  }
  writeFileSync(path, bytes);
  return path;
}

async function recordsAfterHeader(path: string): Promise<number> {
  let count = 0;
  for await (const record of readRecords(path)) count += record.offset > 0 ? 1 : 0;
  return count;
}

describe('cluster --engine exec: stopped after a record with no event number', () => {
  it('counts as written only the records in the output', async () => {
    const input = await fileWithUnnumberedSecondRecord();
    const out = join(dir, 'stopped.jets');
    const fake = fakeIo();
    const program = `exec:"${process.execPath}" "${FIXTURE}" crash-all -1`;
    const code = await clusterMain([input, '--engine', program, '--engine-restarts', '0', '--out', out, '-q'], fake.io);
    expect(code).toBe(2);
    const stderr = fake.stderr();
    expect(stderr).toMatch(/record 1, byte \d+: /);
    // event 0 failed (an error record), record 1 has no number to write, event 2 found the program stopped
    expect(await recordsAfterHeader(out)).toBe(1);
    expect(stderr).toContain('stopped there, the 1 events before it were written');
  });
});
