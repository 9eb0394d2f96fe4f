// `jetlag cluster --engine exec:…`: an outside program clusters every event of a file; its
// faults are named on stderr, the events they hit are written as error records (no event
// number lost), and the summary says what failed and which clock measured what. The program is
// tests/fixtures/engines/faulty-engine.mjs.

import { spawnSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main as clusterMain } from '../host/cli/commands/cluster.js';
import { readRecords } from '../host/input/record-reader.js';
import { decodeJetsRecord } from '../host/formats/jets-codec.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';
import { toyEvents, writeEventFile } from './support/run-files.js';

const FIXTURE = join(import.meta.dirname, 'fixtures', 'engines', 'faulty-engine.mjs');
const CLI = join(import.meta.dirname, '..', 'dist', 'host', 'cli', 'cli.js');
const dir = tempDirForSuite('exec-cluster');
const input = writeEventFile(join(dir, 'events.jetlag'), toyEvents(24, 3, 2)).path;

function program(mode: string, event: number): string {
  return `exec:"${process.execPath}" "${FIXTURE}" ${mode} ${event}`;
}

async function cluster(argv: string[]) {
  const fake = fakeIo();
  const code = await clusterMain(argv, fake.io);
  return { code, stderr: fake.stderr() };
}

async function jetsRecords(path: string) {
  const records = [];
  let first = true;
  for await (const record of readRecords(path)) {
    if (first) { first = false; continue; }
    records.push(decodeJetsRecord(record.bytes));
  }
  return records;
}

describe('cluster --engine exec:', () => {
  it('writes every event, a failed one as an error record, and counts it', async () => {
    const out = join(dir, 'crash.jets');
    const { code, stderr } = await cluster([input, '--engine', program('crash', 17), '--out', out]);
    expect(code).toBe(0);
    expect(stderr).toContain('event 17: exited with status 3');
    expect(stderr).toContain('24 events sent, 23 answered, failed: 1 exited, 0 timed out, 0 malformed output, 0 refused by the program; 1 restart');
    expect(stderr).toContain('the difference (pipe and codecs)');
    expect(stderr).toContain('24 events (23 clustered, 0 invalid, 1 failed by the program) with faulty-engine');
    const records = await jetsRecords(out);
    expect(records.map((record) => record.event)).toEqual(Array.from({ length: 24 }, (_, k) => k));
    expect(records[17].error).toContain('exited with status 3');
    expect(records.filter((record) => record.error !== '')).toHaveLength(1);
  });

  it('stops with one line and exit status 2 when the program fails more often than --engine-restarts allows', async () => {
    const out = join(dir, 'crash-all.jets');
    const { code, stderr } = await cluster([input, '--engine', program('crash-all', -1), '--engine-restarts', '1', '--out', out]);
    expect(code).toBe(2);
    expect(stderr).toMatch(/failed 2 times and was restarted 1 times \(--engine-restarts 1\); last: .*event 1: exited with status 3.*; stopped there, the 2 events before it were written/);
    expect((await jetsRecords(out)).map((record) => record.error !== '')).toEqual([true, true]);
  });

  it('ends the program and exits when its output cannot be opened', () => {
    // the program is started before the output (the jets header names it); an output that
    // exists must not leave it running, which would keep jetlag from exiting
    const out = join(dir, 'exists.jets');
    writeFileSync(out, 'not to be replaced');
    const result = spawnSync(process.execPath, [CLI, 'cluster', input, '--engine', program('well', -1), '--out', out], { encoding: 'utf8', timeout: 30_000 });
    expect(result.error).toBeUndefined();
    expect(result.status).toBe(2);
    expect(result.stderr).toContain('the file exists');
  });

  it('refuses shell features in the command, and --emulate beside it, as usage errors', async () => {
    await expect(cluster([input, '--engine', 'exec:my-clusterer | tee log'])).rejects.toThrow("write exec:sh -c '…' to use a shell");
    await expect(cluster([input, '--engine', program('well', -1), '--emulate', 'f32'])).rejects.toThrow('cluster: --emulate and --engine exec: exclude each other');
    await expect(cluster([input, '--engine-restarts', '2'])).rejects.toThrow('cluster: --engine-timeout-ms and --engine-restarts apply to --engine exec: only');
  });
});
