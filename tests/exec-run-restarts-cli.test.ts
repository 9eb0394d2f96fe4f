// `jetlag run --engine exec:` with a program that fails on every event, through the command line
// (real workers, dist/): when --engine-restarts is used up the run stops as an interrupted run
// does, keeping what came before: the --json summary is written and marked partial with the
// program's last fault, the --out jets file holds the events answered or failed, the counts
// add up, and the exit status is 2. The program is tests/fixtures/engines/faulty-engine.mjs.

import { spawnSync } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { readRecords } from '../host/input/record-reader.js';
import { decodeJetsRecord } from '../host/formats/jets-codec.js';
import type { RunSummary } from '../host/measure/summary.js';
import { tempDirForSuite } from './support/temp-dir.js';
import { toyEvents, writeEventFile } from './support/run-files.js';

const FIXTURE = join(import.meta.dirname, 'fixtures', 'engines', 'faulty-engine.mjs');
const CLI = join(import.meta.dirname, '..', 'dist', 'host', 'cli', 'cli.js');
const dir = tempDirForSuite('exec-run-restarts-cli');
const input = writeEventFile(join(dir, 'events.jetlag'), toyEvents(200, 4, 2)).path;

describe('run --engine exec: with a program that used up --engine-restarts', () => {
  it('writes the summary marked partial, keeps the jets, adds up the counts and exits 2', async () => {
    const json = join(dir, 'summary.json');
    const out = join(dir, 'jets.jetlag');
    const program = `exec:"${process.execPath}" "${FIXTURE}" crash-all -1`;
    const result = spawnSync(process.execPath, [CLI, 'run', input, '--engine', program, '--engine-restarts', '2', '--workers', '1', '--batch', '4', '--check', 'none', '--json', json, '--out', out, '-q'],
      { encoding: 'utf8', timeout: 120_000 });
    expect(result.error).toBeUndefined();
    expect(result.status).toBe(2);
    expect(result.stderr).toMatch(/failed 3 times and was restarted 2 times \(--engine-restarts 2\); last: .*exited with status 3.*; the run stopped there/);
    expect(existsSync(json)).toBe(true);
    const summary = JSON.parse(readFileSync(json, 'utf8')) as RunSummary;
    expect(summary.partial).toBe(true);
    expect(summary.partialReason).toMatch(/^the engine program stopped: .*--engine-restarts 2\); last: .*exited with status 3/);
    const { read, ok, failed, invalid } = summary.events;
    // reading stopped at the fault: not every event of the file was read, and those not read are in no count
    expect(read).toBeLessThan(200);
    expect(read).toBe(ok + failed + invalid);
    expect(failed).toBe(read);
    expect(summary.configuration.input.records).toBeNull();
    // every event read is in the jets file, as an error record
    const events: number[] = [];
    let first = true;
    for await (const record of readRecords(out)) {
      if (first) { first = false; continue; }
      const jets = decodeJetsRecord(record.bytes);
      expect(jets.error).not.toBe('');
      events.push(jets.event);
    }
    expect(events).toEqual(Array.from({ length: read }, (_, k) => k));
  }, 120_000);
});
