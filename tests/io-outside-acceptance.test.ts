// Raw deposits outside the grid's eta range are "counted as outside acceptance (reported, not
// an error)" (clustering-spec.md section 1): `jetlag cluster` and `jetlag export` say how many
// in their summary line, and the event is clustered or written all the same. Invented deposits.

import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { PassThrough } from 'node:stream';
import { describe, expect, it } from 'vitest';
import type { CommandIo } from '../host/cli/args.js';
import { main as clusterMain } from '../host/cli/commands/cluster.js';
import { main as exportMain } from '../host/cli/commands/export.js';
import { EventFileWriter } from '../host/output/record-writer.js';
import { DEFAULT_GRID } from '../host/types.js';

const dir = mkdtempSync(join(tmpdir(), 'jetlag-acceptance-'));

async function runCommand(command: typeof clusterMain, argv: string[]) {
  const stderr = new PassThrough();
  const err: Buffer[] = [];
  stderr.on('data', (c) => err.push(c));
  const stdout = new PassThrough();
  stdout.resume();
  const stdin = new PassThrough();
  stdin.end();
  const io: CommandIo = { stdout, stderr, stdin, isTty: false };
  const code = await command(argv, io);
  return { code, stderr: Buffer.concat(err).toString('utf8') };
}

/** one event: a deposit inside the default grid and three outside it (|eta| >= 2.5) */
async function rawFile(): Promise<string> {
  const path = join(dir, 'raw.jetlag');
  const writer = await EventFileWriter.open(path, { grid: DEFAULT_GRID, producer: 'test', label: 'invented' });
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
