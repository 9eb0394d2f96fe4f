// Benchmarks of the event-file input path (node dist/bench/io.bench.js after npm run build):
//   1. one event record decoded by the hand-written decoder (event-codec.ts) against
//      protobufjs's reflection decode of the same bytes (tinybench);
//   2. framing a whole file with readRecords, plain and gzip (records/s, MB/s);
//   3. reading the same events as a CSV tower file.
// Events are invented (the toy generator, host/generate.ts, pileup 200). The machine is
// shared: quote medians and ratios from one run.

import { mkdtempSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { performance } from 'node:perf_hooks';
import { gzipSync } from 'node:zlib';
import { Bench } from 'tinybench';
import { readCsvTowers } from '../host/input/csv-towers.js';
import { encodeEventRecord, EventRecordDecoder } from '../host/formats/event-codec.js';
import { encodeFileHeader } from '../host/formats/file-header.js';
import { generateEvents } from '../host/generator/generate.js';
import { loadJetlagSchema } from '../tests/support/proto-schema.js';
import { readRecords } from '../host/input/record-reader.js';
import { DEFAULT_GRID } from '../host/types.js';
import { delimit } from '../host/formats/wire.js';

const dir = mkdtempSync(join(tmpdir(), 'jetlag-io-bench-'));
const events = [...generateEvents(DEFAULT_GRID, { events: 200, pileup: 200, seed: 7 })];
const records = events.map((e, k) => encodeEventRecord({ event: k, towerIndex: e.towerIndex, towerEt: e.towerEt }));
const meanTowers = events.reduce((s, e) => s + e.towerIndex.length, 0) / events.length;
const meanBytes = records.reduce((s, r) => s + r.length, 0) / records.length;
console.log(`toy events: ${events.length}, mean ${meanTowers.toFixed(0)} towers, mean record ${meanBytes.toFixed(0)} bytes`);

// 1. decode one record
const EventRecord = loadJetlagSchema().lookupType('jetlag.EventRecord');
const decoder = new EventRecordDecoder();
let k = 0;
let sink = 0;
const bench = new Bench({ name: 'event record decode', time: 1000 });
bench
  .add('hand decoder into typed arrays (EventRecordDecoder)', () => {
    decoder.decode(records[k++ % records.length]);
    sink += decoder.towerIndexCount;
  })
  .add('protobufjs decode (reflection, number[] arrays)', () => {
    const m = EventRecord.decode(records[k++ % records.length]) as unknown as { towerIndex: number[] };
    sink += m.towerIndex.length;
  });
await bench.run();
console.table(bench.table());
const [hand, pbjs] = bench.tasks.map((t) => t.result && 'latency' in t.result ? t.result.latency.p50 : NaN);
console.log(`median per record: hand ${(hand * 1e6).toFixed(0)} ns, protobufjs ${(pbjs * 1e6).toFixed(0)} ns, ratio ${(pbjs / hand).toFixed(1)}x`);

// 2. framing a file
const copies = 50; // 10 000 records
const parts: Uint8Array[] = [delimit(encodeFileHeader({ kind: 'events', grid: DEFAULT_GRID, producer: 'jetlag bench', label: 'invented toy events' }))];
for (let c = 0; c < copies; c++) for (const r of records) parts.push(delimit(r));
const file = Buffer.concat(parts);
const plainPath = join(dir, 'events.pb');
const gzipPath = join(dir, 'events.pb.gz');
writeFileSync(plainPath, file);
writeFileSync(gzipPath, gzipSync(file));
for (const path of [plainPath, gzipPath]) {
  const times: number[] = [];
  let count = 0;
  for (let rep = 0; rep < 5; rep++) {
    const t0 = performance.now();
    count = 0;
    for await (const r of readRecords(path)) count += r.bytes.length > 0 ? 1 : 0;
    times.push(performance.now() - t0);
  }
  times.sort((a, b) => a - b);
  const ms = times[2];
  console.log(`readRecords ${path.endsWith('.gz') ? 'gzip ' : 'plain'}: ${count} records, ${(file.length / 1e6).toFixed(1)} MB uncompressed ` +
    `(${(statSync(path).size / 1e6).toFixed(1)} MB on disk), median of 5: ${ms.toFixed(0)} ms, ` +
    `${(count / ms * 1000 / 1e3).toFixed(0)}k records/s, ${(file.length / ms / 1e3).toFixed(0)} MB/s`);
}

// 3. the same events as CSV
const lines = ['event,ieta,iphi,et'];
for (let c = 0, n = 0; c < 5; c++) {
  for (const e of events) {
    for (let t = 0; t < e.towerIndex.length; t++) lines.push(`${n},${Math.floor(e.towerIndex[t] / 64)},${e.towerIndex[t] % 64},${e.towerEt[t]}`);
    n++;
  }
}
const csvPath = join(dir, 'towers.csv');
writeFileSync(csvPath, lines.join('\n') + '\n');
{
  const times: number[] = [];
  let count = 0;
  for (let rep = 0; rep < 5; rep++) {
    const t0 = performance.now();
    count = 0;
    for await (const e of readCsvTowers(csvPath, { grid: DEFAULT_GRID })) count += e.problem === null ? 1 : 0;
    times.push(performance.now() - t0);
  }
  times.sort((a, b) => a - b);
  const ms = times[2];
  console.log(`readCsvTowers: ${count} events, ${lines.length - 1} rows, ${(statSync(csvPath).size / 1e6).toFixed(1)} MB, median of 5: ${ms.toFixed(0)} ms, ` +
    `${((lines.length - 1) / ms / 1e3).toFixed(2)}M rows/s`);
}
if (sink < 0) console.log(sink);
rmSync(dir, { recursive: true, force: true });
