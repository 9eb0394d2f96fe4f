// Raw deposits outside the grid's eta range are "counted as outside acceptance (reported, not
// an error)" (clustering-spec.md section 1): `jetlag cluster` and `jetlag export` say how many
// in their summary line, and the event is clustered or written all the same. Invented deposits.

import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main as clusterMain } from '../host/cli/commands/cluster.js';
import { main as exportMain } from '../host/cli/commands/export.js';
import { EventFileWriter } from '../host/output/record-writer.js';
import { DEFAULT_GRID } from '../host/types.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('acceptance');

async function runCommand(command: typeof clusterMain, argv: string[]) {
  const fake = fakeIo();
  const code = await command(argv, fake.io);
  return { code, stderr: fake.stderr() };
}

/** one event: a deposit inside the default grid and three outside it (|eta| >= 2.5) */
async function rawFile(): Promise<string> {
  const path = join(dir, 'raw.jetlag');
  const writer = await EventFileWriter.open(path, { grid: DEFAULT_GRID, producer: 'test', label: 'invented' }, { force: true }); // made again by each test
  await writer.writeEvent({ event: 0, depositEta: Float64Array.of(0.3, 2.5, -2.6, 7), depositPhi: Float64Array.of(1, 1, 1, 1), depositEt: Float64Array.of(10, 1, 1, 1) });
  await writer.close();
  return path;
}

describe('raw deposits outside the eta acceptance', () => {
  it('are counted in the summary line of cluster, and the event is clustered', async () => {
    const { code, stderr } = await runCommand(clusterMain, [await rawFile(), '--engine', 'reference', '--format', 'jsonl']);
    expect(code).toBe(0);
    expect(stderr).toMatch(/1 clustered, 0 invalid.*; 3 raw deposits outside the eta acceptance/);
  });

  it('are counted in the summary line of export', async () => {
    const { code, stderr } = await runCommand(exportMain, [await rawFile(), '--format', 'csv']);
    expect(code).toBe(0);
    expect(stderr).toMatch(/3 raw deposits outside the eta acceptance/);
  });
});
