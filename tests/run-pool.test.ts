// The streamed run with real worker threads (compiled worker from dist/: `npm run build:host`).
import { afterEach, beforeAll, describe, expect, it } from 'vitest';
import { existsSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { inputErrorOf } from '../host/pipeline/run-summary.js';
import { runEvents } from '../host/pipeline/run.js';
import { BatchBuilder, BatchPool, type BatchOutcome } from '../host/pipeline/pool.js';
import { mergeSummaries } from '../host/measure/summary-merge.js';
import { EventTowerReader } from '../host/input/event-towers.js';
import { encodeEventRecord } from '../host/formats/event-codec.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS } from '../host/types.js';
import { toyEvents, writeEventFile } from './support/run-files.js';
import { openRecordFile } from '../host/input/event-source.js';
import { decodeJetsRecord } from '../host/formats/jets-codec.js';
import { ReferenceClusterer } from '../host/clustering/reference.js';
import { firstJetDifference } from '../host/validate/bit-exact.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('run');
const events = toyEvents(120, 17, 5);
const file = writeEventFile(join(dir, 'toy.events'), events);
/** the product worker plus faults planted through JETLAG_TEST_* (tests/support/fault-worker.ts) */
const faultWorker = join(__dirname, '..', 'dist', 'tests', 'support', 'fault-worker.js');

function withEnv(name: string, value: string | undefined) {
  const before = process.env[name];
  if (value === undefined) delete process.env[name]; else process.env[name] = value;
  return () => { if (before === undefined) delete process.env[name]; else process.env[name] = before; };
}

let restore: (() => void)[] = [];
afterEach(() => { for (const undo of restore.reverse()) undo(); restore = []; });

describe('a streamed run', () => {
  beforeAll(() => {
    if (!readdirSync(join(__dirname, '..', 'dist', 'host', 'pipeline')).includes('worker.js')) throw new Error('build first: npm run build:host');
    if (!existsSync(faultWorker)) throw new Error('build first: npm run build:host');
  });

  it('counts every event once: ok + invalid + failed = read = events in the file', async () => {
    const summary = await runEvents({ input: file.path, workers: 2, batch: 7, check: { mode: 'none', fraction: 0, seed: 1 } });
    expect(summary.events).toEqual({ read: events.length, ok: events.length, invalid: 0, failed: 0 });
    expect(summary.latency.service.count).toBe(events.length);
    expect(summary.partial).toBe(false);
  });

  it('agrees bit for bit with the reference on every checked event', async () => {
    const summary = await runEvents({ input: file.path, workers: 2, batch: 16, check: { mode: 'all', fraction: 1, seed: 1 } });
    expect(summary.check.checked).toBe(events.length);
    expect(summary.check.agreeing).toBe(events.length);
  });

  it('counts a planted disagreement and writes that event, as read, to the repro file', async () => {
    restore.push(withEnv('JETLAG_TEST_PERTURB_EVENT', String(events[7].event)));
    const repro = join(dir, 'repro.events');
    const summary = await runEvents({ input: file.path, workers: 2, batch: 16, check: { mode: 'all', fraction: 1, seed: 1 }, repro, engine: 'wasm', workerFile: faultWorker });
    expect(summary.check).toMatchObject({ checked: events.length, agreeing: events.length - 1, disagreeing: 1 });
    expect(summary.check.differences).toEqual([expect.objectContaining({ event: events[7].event, jet: 0, field: 'pt' })]);
    const source = await openRecordFile(repro);
    const written: Uint8Array[] = [];
    for await (const record of source.records) written.push(record.bytes);
    expect(written.map((bytes) => Buffer.from(bytes).toString('hex'))).toEqual([Buffer.from(encodeEventRecord(events[7])).toString('hex')]);
  });

  it('counts invalid events and lists each with its event number, byte offset and the reason event-towers.ts gives', async () => {
    const bad = [
      { event: 0, towerIndex: [5, 9], towerEt: [1.5, 2] },
      { event: 1, towerIndex: [5, 9], towerEt: [1.5, Number.NaN] },
      { event: 2, towerIndex: [5, 5], towerEt: [1, 2] },
      { event: 3, towerIndex: [99999], towerEt: [1] },
      { event: 4, towerIndex: [1, 2], towerEt: [1] },
      { event: 5, towerIndex: [7], towerEt: [3] },
      { event: 6, error: 'row 12: et is not a number' },
      { event: 7, towerIndex: [8], towerEt: [2e150] },
    ];
    const written = writeEventFile(join(dir, 'bad.events'), bad);
    const summary = await runEvents({ input: written.path, workers: 2, batch: 3 });
    expect(summary.events).toEqual({ read: 8, ok: 2, invalid: 6, failed: 0 });
    const reader = new EventTowerReader(DEFAULT_GRID);
    const expected = [1, 2, 3, 4, 6, 7].map((k) => {
      const result = reader.read(encodeEventRecord(bad[k]));
      return { event: k, record: k, offset: written.offsets[k], reason: result.ok ? 'valid?' : result.problem };
    });
    expect(summary.invalidEvents).toEqual(expected);
  });

  it('keeps every event before a truncated record, and names the file and byte offset of the break', async () => {
    const whole = readFileSync(file.path);
    const cut = join(dir, 'cut.events');
    writeFileSync(cut, whole.subarray(0, file.offsets[50] + 7));
    const summary = await runEvents({ input: cut, workers: 2, batch: 8 });
    expect(summary.events).toEqual({ read: 50, ok: 50, invalid: 0, failed: 0 });
    expect(summary.partial).toBe(true);
    const error = inputErrorOf(summary);
    expect(error?.offset).toBe(file.offsets[50]);
    expect(error?.message).toContain(`${cut}, `);
    expect(error?.message).toContain(`byte ${file.offsets[50]}:`);
  });

  it('marks the events of a batch whose worker throws as failed, with the reason, and finishes the run', async () => {
    restore.push(withEnv('JETLAG_TEST_FAULT', 'throw:1'));
    const summary = await runEvents({ input: file.path, workers: 2, batch: 10, workerFile: faultWorker });
    expect(summary.events).toEqual({ read: events.length, ok: events.length - 10, invalid: 0, failed: 10 });
    expect(summary.failedBatches).toEqual([{ firstRecord: 10, events: 10, offset: file.offsets[10], reason: 'planted fault in batch 1' }]);
  });

  it('marks a batch failed when its worker thread dies, replaces the thread and finishes the run', async () => {
    restore.push(withEnv('JETLAG_TEST_FAULT', 'exit:2'));
    const summary = await runEvents({ input: file.path, workers: 1, batch: 10, workerFile: faultWorker });
    expect(summary.events).toEqual({ read: events.length, ok: events.length - 10, invalid: 0, failed: 10 });
    expect(summary.failedBatches.map((b) => b.firstRecord)).toEqual([20]);
    expect(summary.failedBatches[0].reason).toMatch(/exit/i);
  });

  it('merged from two shards gives the single run\'s counts and clustering-time percentiles exactly', async () => {
    // times are a fixed function of each event here, so two runs over the same events record the same values
    restore.push(withEnv('JETLAG_TEST_SYNTHETIC_TIMES', '1'));
    const options = { input: file.path, workers: 2, batch: 8, check: { mode: 'none' as const, fraction: 0, seed: 1 }, workerFile: faultWorker };
    const single = await runEvents(options);
    const shard0 = await runEvents({ ...options, shard: { index: 0, count: 2 } });
    const shard1 = await runEvents({ ...options, shard: { index: 1, count: 2 } });
    expect(shard0.events.read + shard1.events.read).toBe(events.length);
    expect(shard0.events.read).toBeGreaterThan(0);
    const merged = mergeSummaries([
      { name: 'shard0.json', summary: JSON.parse(JSON.stringify(shard0)) },
      { name: 'shard1.json', summary: JSON.parse(JSON.stringify(shard1)) },
    ]);
    expect(merged.events).toEqual(single.events);
    expect(merged.latency.service).toEqual(single.latency.service);
    expect(merged.latency.stages).toEqual(single.latency.stages);
    expect(merged.scaling).toEqual(single.scaling);
    expect(merged.histograms.service).toEqual(single.histograms.service);
  });
});

describe('the pool', () => {
  it('transfers each batch buffer: the sender\'s byteLength becomes 0', async () => {
    const outcomes: BatchOutcome[] = [];
    const pool = new BatchPool({
      workers: 1,
      maxInFlight: 2,
      config: { grid: DEFAULT_GRID, settings: { ...DEFAULT_SETTINGS }, engine: 'reference', checkFraction: 0, checkSeed: 1, encodeJets: false },
      deliver: (outcome) => outcomes.push(outcome),
    });
    try {
      const builder = new BatchBuilder();
      builder.add(encodeEventRecord(events[0]), 100);
      builder.add(encodeEventRecord(events[1]), 200);
      const sealed = builder.seal(0);
      expect(sealed.task.buffer.byteLength).toBeGreaterThan(0);
      pool.dispatch(sealed, 0, new Float64Array(2));
      expect(sealed.task.buffer.byteLength).toBe(0);
      await pool.drain();
      expect(outcomes[0].result!.count).toBe(2);
      expect(Array.from(outcomes[0].recordOffsets)).toEqual([100, 200]);
    } finally {
      await pool.close();
    }
  });

  it('refills a batch buffer the worker handed back, and the smaller batch in it reads only its own records', async () => {
    const eventNumbers: number[] = [];
    const pool = new BatchPool({
      workers: 1,
      maxInFlight: 2,
      config: { grid: DEFAULT_GRID, settings: { ...DEFAULT_SETTINGS }, engine: 'reference', checkFraction: 0, checkSeed: 1, encodeJets: false },
      deliver: (outcome) => eventNumbers.push(...Array.from(new Float64Array(outcome.result!.buffer, 0, outcome.count))),
    });
    try {
      const builder = new BatchBuilder();
      for (let k = 0; k < 3; k++) builder.add(encodeEventRecord(events[k]), 0);
      const first = builder.seal(0, pool.spares);
      const firstBytes = first.task.buffer.byteLength;
      pool.dispatch(first, 0, new Float64Array(3));
      await pool.drain();
      builder.add(encodeEventRecord(events[3]), 0);
      const second = builder.seal(1, pool.spares);
      // the first batch's buffer, back from the worker with its old records still in it
      expect(second.task.buffer.byteLength).toBe(firstBytes);
      expect(pool.spares.take(1)).toBeNull();
      pool.dispatch(second, 3, new Float64Array(1));
      await pool.drain();
      expect(eventNumbers).toEqual(events.slice(0, 4).map((e) => e.event));
    } finally {
      await pool.close();
    }
  });

  it('delivers results in input order when a later batch finishes first', async () => {
    restore.push(withEnv('JETLAG_TEST_FAULT', 'stall:0:800'));
    const delivered: number[] = [];
    const finishedNs: number[] = [];
    const eventNumbers: number[] = [];
    const pool = new BatchPool({
      workers: 2,
      maxInFlight: 4,
      config: { grid: DEFAULT_GRID, settings: { ...DEFAULT_SETTINGS }, engine: 'reference', checkFraction: 0, checkSeed: 1, encodeJets: false },
      workerFile: faultWorker,
      deliver: (outcome) => {
        delivered.push(outcome.batchIndex);
        finishedNs.push(outcome.finishedNs);
        eventNumbers.push(...Array.from(new Float64Array(outcome.result!.buffer, 0, outcome.count)));
      },
    });
    try {
      for (let b = 0; b < 4; b++) {
        const builder = new BatchBuilder();
        for (let k = 0; k < 3; k++) builder.add(encodeEventRecord(events[b * 3 + k]), 0);
        pool.dispatch(builder.seal(b), b * 3, new Float64Array(3));
      }
      await pool.drain();
      expect(finishedNs[1]).toBeLessThan(finishedNs[0]); // batch 1 came back during batch 0's stall
      expect(delivered).toEqual([0, 1, 2, 3]);
      expect(eventNumbers).toEqual(events.slice(0, 12).map((e) => e.event));
    } finally {
      await pool.close();
    }
  });
});

describe('the jets file of a run', () => {
  it('holds every event in input order with jets identical to the reference\'s', async () => {
    const out = join(dir, 'toy.jets');
    const summary = await runEvents({ input: file.path, workers: 2, batch: 5, out, check: { mode: 'none', fraction: 0, seed: 1 } });
    expect(readdirSync(dir).filter((name) => name.includes('.tmp-'))).toEqual([]);
    const source = await openRecordFile(out);
    expect(source.format).toBe('jets-file');
    expect(source.header.settings?.engine).toBe(summary.configuration.engine);
    const reference = new ReferenceClusterer(DEFAULT_GRID, DEFAULT_SETTINGS);
    let k = 0;
    for await (const record of source.records) {
      const decoded = decodeJetsRecord(record.bytes);
      const input = events[k++];
      expect(decoded.event).toBe(input.event);
      const expected = reference.cluster(Int32Array.from(input.towerIndex!), Float64Array.from(input.towerEt!));
      expect(firstJetDifference(decoded.jets, expected)).toBeNull();
    }
    expect(k).toBe(events.length);
  });
});
