// What each latency figure means, on real worker threads (compiled from dist/: `npm run
// build:host`) with a stub clusterer of known cost (tests/support/fault-worker.ts): it spins a
// set number of µs per event, so service time, capacity and queueing are known in advance.
// The machine these run on may be shared and busy: every bound leaves a wide margin on the
// side a busy machine pushes, and is still crossed by a wrong definition of the figure.
import { afterEach, beforeAll, describe, expect, it } from 'vitest';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { runEvents } from '../host/pipeline/run.js';
import type { RunOptions } from '../host/pipeline/run-plan.js';
import { findRate } from '../host/pipeline/studies.js';
import type { RunSummary } from '../host/measure/summary.js';
import { toyEvents, writeEventFile } from './support/run-files.js';
import { tempDirForSuite } from './support/temp-dir.js';
import { openRecordFile } from '../host/input/event-source.js';
import { decodeJetsRecord, encodeJetsRecord } from '../host/formats/jets-codec.js';

const dir = tempDirForSuite('open-loop');
const events = toyEvents(150, 29, 2);
const file = writeEventFile(join(dir, 'toy.events'), events);
const faultWorker = join(__dirname, '..', 'dist', 'tests', 'support', 'fault-worker.js');
const base: RunOptions = { input: file.path, workers: 1, batch: 8, check: { mode: 'none', fraction: 0, seed: 1 }, workerFile: faultWorker, progress: null };

function withEnv(name: string, value: string) {
  const before = process.env[name];
  process.env[name] = value;
  return () => { if (before === undefined) delete process.env[name]; else process.env[name] = before; };
}

/** Each record of a jets file as bytes, encoded again with its clustering time set to 0. */
async function jetsRecordsWithoutTimes(path: string): Promise<string[]> {
  const source = await openRecordFile(path);
  const records: string[] = [];
  for await (const record of source.records) {
    const decoded = decodeJetsRecord(record.bytes);
    records.push(Buffer.from(encodeJetsRecord({ event: decoded.event, jets: decoded.error ? null : decoded.jets, clusterTimeNs: 0, error: decoded.error })).toString('hex'));
  }
  return records;
}

let restore: (() => void)[] = [];
afterEach(() => { for (const undo of restore.reverse()) undo(); restore = []; });

beforeAll(() => {
  if (!existsSync(faultWorker)) throw new Error('build first: npm run build:host');
});

describe('a closed loop with a stub of known cost', () => {
  it('gives the stub\'s cost as the service time of each event', async () => {
    restore.push(withEnv('JETLAG_TEST_STUB_US', '800'));
    const summary = await runEvents({ ...base, maxEvents: 60 });
    const service = summary.latency.service;
    expect(service.count).toBe(60);
    // the spin ends at its deadline: never shorter; a busy machine may stretch a few events,
    // not the median; a per-batch figure would be 8 times the cost
    expect(summary.histograms.service.minNs).toBeGreaterThanOrEqual(800_000);
    expect(service.p50_us).toBeLessThan(1_200);
  });
});

describe('an open loop with a stub of known cost', () => {
  it('has next to no wait at a tenth of capacity, and wait + service + return = end-to-end', async () => {
    // 20 ms per event and one due every 200 ms
    restore.push(withEnv('JETLAG_TEST_STUB_US', '20000'));
    const summary = await runEvents({ ...base, maxEvents: 15, arrival: { kind: 'fixed', rateHz: 5 } });
    const { wait, service, endToEnd } = summary.latency;
    expect(endToEnd.count).toBe(15);
    // a wait that held any of the service, or events held back for a batch (200 ms apart), is
    // far above this
    expect(wait.p50_us).toBeLessThan(5_000);
    expect(service.p50_us).toBeGreaterThanOrEqual(20_000);
    // per event, in integer ns: the three parts add up to the whole
    const parts = summary.histograms.wait.sumNs + summary.histograms.service.sumNs + summary.histograms.return.sumNs;
    expect(Math.abs(parts - summary.histograms.endToEnd.sumNs)).toBeLessThanOrEqual(2 * 15);
    expect(summary.saturation).toMatchObject({ offeredHz: 5, saturated: false });
  });

  it('starts the clock once every worker has taken its seat: a worker slow to start is not the first events\' wait', async () => {
    // the serve task starts 400 ms late; one event due every 20 ms from the run's start
    restore.push(withEnv('JETLAG_TEST_STUB_US', '1000'), withEnv('JETLAG_TEST_SERVE_DELAY_MS', '400'));
    const summary = await runEvents({ ...base, maxEvents: 10, arrival: { kind: 'fixed', rateHz: 50 } });
    expect(summary.latency.endToEnd.count).toBe(10);
    // counted from a start before the worker sat down, the first event would wait 400 ms
    expect(summary.latency.wait.max_us).toBeLessThan(200_000);
  });

  it('charges a stalled worker to the events due during the stall, from their scheduled arrival (no coordinated omission, common practice)', async () => {
    // one worker, 200 µs per event, one event due every 2 ms; event 40 stalls the worker 60 ms,
    // so the ~30 events due during the stall wait up to ~58 ms, each from its own arrival
    restore.push(withEnv('JETLAG_TEST_STUB_US', '200'));
    restore.push(withEnv('JETLAG_TEST_STUB_STALL', `${events[40].event}:60`));
    const summary = await runEvents({ ...base, arrival: { kind: 'fixed', rateHz: 500 } });
    const { wait } = summary.latency;
    expect(wait.count).toBe(events.length);
    expect(wait.max_us).toBeGreaterThan(45_000);
    // the top 10 % (15 events) all arrived in the first 30 ms of the stall: waits of 30 ms and
    // more; timed from their hand-over to the worker instead, they would show next to nothing
    expect(wait.p90_us).toBeGreaterThan(25_000);
  });

  it('flags a rate above capacity as saturated, with both rates', async () => {
    // 2 ms per event on one worker: capacity 500 events/s, offered 2000
    restore.push(withEnv('JETLAG_TEST_STUB_US', '2000'));
    const summary = await runEvents({ ...base, maxEvents: 120, arrival: { kind: 'fixed', rateHz: 2000 } });
    expect(summary.saturation!.saturated).toBe(true);
    expect(summary.saturation!.offeredHz).toBeCloseTo(2000, 6);
    expect(summary.saturation!.sustainedHz).toBeLessThan(1000);
  });
});

describe('the rate search with a stub of known cost', () => {
  it('rejects a saturated rate even when its p99 is within the budget', async () => {
    restore.push(withEnv('JETLAG_TEST_STUB_US', '2000'));
    // told the pool takes 10 times what the stub allows: the top trial (5000 Hz) and the
    // middle one (~700 Hz) are above the 500 events/s capacity; the bottom one (100 Hz) is not
    const claimed = { throughput: { eventsPerSecond: 5000 }, configuration: { workers: 1 } } as RunSummary;
    const found = await findRate({ ...base, maxEvents: 60 }, claimed, 1e9, false, 3);
    expect(found.trials.map((t) => t.saturated)).toEqual([false, true, true]);
    expect(found.trials.map((t) => t.withinBudget)).toEqual([true, false, false]);
    expect(found.rateHz).toBeCloseTo(100, 6);
  });
});

describe('the outputs of an open loop', () => {
  it('are those of a closed loop: the same jets records but for their times, the same counts and check results', async () => {
    const options: RunOptions = { input: file.path, workers: 2, batch: 8, maxEvents: 60, check: { mode: 'fraction', fraction: 0.2, seed: 3 }, progress: null };
    const closed = await runEvents({ ...options, out: join(dir, 'closed.jets') });
    const open = await runEvents({ ...options, out: join(dir, 'open.jets'), arrival: { kind: 'poisson', rateHz: 400, seed: 5 } });
    const closedRecords = await jetsRecordsWithoutTimes(join(dir, 'closed.jets'));
    expect(closedRecords).toHaveLength(60);
    expect(await jetsRecordsWithoutTimes(join(dir, 'open.jets'))).toEqual(closedRecords);
    expect(open.events).toEqual(closed.events);
    expect(open.check).toEqual(closed.check);
    expect(open.check.checked).toBeGreaterThan(0);
    expect(open.jets).toBe(closed.jets);
  });
});
