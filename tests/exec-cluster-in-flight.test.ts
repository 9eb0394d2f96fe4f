// `jetlag cluster --engine exec: --engine-in-flight N`: with two events given to the program
// ahead of its answers, a skipped event or one held back for the next is one malformed line
// naming the program, the event and the byte of its output; with the default one it is a
// timeout. Either way every event is written in input order (the failed ones as error records)
// and the command goes on. The program is tests/fixtures/engines/faulty-engine.mjs.

import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main as clusterMain } from '../host/cli/commands/cluster.js';
import { readRecords } from '../host/input/record-reader.js';
import { decodeJetsRecord } from '../host/formats/jets-codec.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';
import { toyEvents, writeEventFile } from './support/run-files.js';

const FIXTURE = join(import.meta.dirname, 'fixtures', 'engines', 'faulty-engine.mjs');
const EVENTS = 24;
const dir = tempDirForSuite('exec-cluster-in-flight');
const input = writeEventFile(join(dir, 'events.jetlag'), toyEvents(EVENTS, 3, 2)).path;

async function cluster(name: string, mode: string, event: number, extra: string[]) {
  const out = join(dir, `${name}.jets`);
  const fake = fakeIo();
  const code = await clusterMain([input, '--engine', `exec:"${process.execPath}" "${FIXTURE}" ${mode} ${event}`, '--engine-timeout-ms', '1000', '--out', out, ...extra], fake.io);
  const records = [];
  let first = true;
  for await (const record of readRecords(out)) {
    if (first) { first = false; continue; }
    records.push(decodeJetsRecord(record.bytes));
  }
  return { code, stderr: fake.stderr(), events: records.map((record) => record.event), failed: records.filter((record) => record.error !== '').map((record) => record.event) };
}

describe('cluster --engine exec: --engine-in-flight', () => {
  it('2: a skipped event is an answer out of order, and every event is written in order', async () => {
    const { stderr, events, failed } = await cluster('skip-2', 'skip', 12, ['--engine-in-flight', '2']);
    expect(stderr).toMatch(/skip 12, event 12: output byte \d+: answered event 13 where event 12 was due/);
    expect(stderr).toContain(`${EVENTS} events sent, ${EVENTS - 2} answered, failed: 0 exited, 0 timed out, 2 malformed output`);
    expect(events).toEqual(Array.from({ length: EVENTS }, (_, k) => k));
    expect(failed).toEqual([12, 13]);
  }, 60_000);

  it('2: an event held back for the next is an answer out of order too', async () => {
    const { stderr, failed } = await cluster('swap-2', 'swap', 20, ['--engine-in-flight', '2']);
    expect(stderr).toMatch(/swap 20, event 20: output byte \d+: answered event 21 where event 20 was due/);
    expect(failed).toEqual([20, 21]);
  }, 60_000);

  it('1 (the default): a skipped event is a timeout', async () => {
    const { stderr, events, failed } = await cluster('skip-1', 'skip', 12, []);
    expect(stderr).toContain('skip 12, event 12: no answer within 1000 ms (timed out); killed');
    expect(events).toEqual(Array.from({ length: EVENTS }, (_, k) => k));
    expect(failed).toEqual([12]);
  }, 60_000);

  it('refuses it without exec:', async () => {
    await expect(clusterMain([input, '--engine-in-flight', '2'], fakeIo().io)).rejects.toThrow('cluster: --engine-in-flight applies to --engine exec: only');
  });
});
