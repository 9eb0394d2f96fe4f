// Benchmarks of the streamed run (node dist/bench/pool.bench.js [--quick | --no-streaming | --streaming-only]
// after npm run build):
//   1. the pool's per-task round trip (tinybench), and events/s against the batch size K,
//      which chose run.ts's DEFAULT_BATCH;
//   2. 1 against 2 workers at pileup 200 (closed loop);
//   3. the host's own cost per event (main thread: read, frame, copy, dispatch, collect; worker:
//      decode and bin) against the clustering time per event;
//   4. resident memory while streaming a generated file of at least 1 GiB (skipped by --quick).
// Events are invented (the toy generator, host/generate.ts). Figures go to stdout and to
// bench/results/pool.json (not committed). The machine is shared: quote medians and ratios.

import { mkdirSync, mkdtempSync, openSync, closeSync, readFileSync, writeSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { Worker } from 'node:worker_threads';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Bench } from 'tinybench';
import { Piscina } from 'piscina';
import { encodeEventRecord } from '../host/formats/event-codec.js';
import { encodeFileHeader } from '../host/formats/file-header.js';
import { generateEvents } from '../host/generator/generate.js';
import { delimit } from '../host/formats/wire.js';
import { DEFAULT_GRID } from '../host/types.js';
import { runEvents, type RunOptions } from '../host/pipeline/run.js';
import { workerFile } from '../host/pipeline/pool.js';
import { describeMachine } from '../host/measure/summary.js';

const quick = process.argv.includes('--quick');
/** sections 1-3 at full size, without the long streaming run */
const noStreaming = process.argv.includes('--no-streaming');
/** only section 4 (the long streaming run) */
const streamingOnly = process.argv.includes('--streaming-only');
const dir = mkdtempSync(join(tmpdir(), 'jetlag-bench-'));
const results: Record<string, unknown> = { machine: describeMachine() };

/** Writes `events` toy events of the given pileup, cycling through `distinct` generated ones. */
function writeToyFile(path: string, events: number, pileup: number, distinct: number): { bytes: number; meanTowers: number } {
  const pool: { towerIndex: Int32Array; towerEt: Float64Array }[] = [];
  for (const e of generateEvents(DEFAULT_GRID, { events: Math.min(distinct, events), pileup, seed: 2026 })) {
    pool.push({ towerIndex: e.towerIndex, towerEt: e.towerEt });
  }
  const fd = openSync(path, 'w');
  let bytes = 0;
  const write = (chunk: Uint8Array) => { bytes += writeSync(fd, chunk); };
  write(delimit(encodeFileHeader({ kind: 'events', grid: DEFAULT_GRID, producer: 'jetlag bench', label: 'invented toy events (Halden ring scenario)' })));
  let towers = 0;
  const parts: Uint8Array[] = [];
  let partBytes = 0;
  for (let k = 0; k < events; k++) {
    const source = pool[k % pool.length];
    towers += source.towerIndex.length;
    const record = delimit(encodeEventRecord({ event: k, towerIndex: source.towerIndex, towerEt: source.towerEt }));
    parts.push(record);
    partBytes += record.length;
    if (partBytes > 1 << 22) { write(Buffer.concat(parts)); parts.length = 0; partBytes = 0; }
  }
  if (parts.length) write(Buffer.concat(parts));
  closeSync(fd);
  return { bytes, meanTowers: towers / events };
}

function line(text: string): void {
  process.stdout.write(text + '\n');
}

/** CPU seconds of every thread of this process so far, finished worker threads included (getrusage). */
function threadCpuSeconds(): number {
  const usage = process.cpuUsage();
  return (usage.user + usage.system) / 1e6;
}

const median = (values: number[]) => [...values].sort((a, b) => a - b)[Math.floor(values.length / 2)];

// ---- 1. per-task round trip and batch size ----------------------------------------------
if (!streamingOnly) {
  const pool = new Piscina({ filename: workerFile(), minThreads: 1, maxThreads: 1, idleTimeout: Infinity, workerData: {
    grid: DEFAULT_GRID, settings: { p: -1, radius: 0.4, ptMin: 0, threshold: 0, recombination: 'e' }, engine: 'wasm', checkFraction: 0, checkSeed: 1, encodeJets: false,
  } });
  const emptyTask = () => { const buffer = new ArrayBuffer(8); return pool.run({ batchIndex: -1, count: 0, dataStart: 8, buffer }, { transferList: [buffer] }); };
  await emptyTask();
  const bench = new Bench({ name: 'pool round trip', time: 1000 });
  bench.add('empty batch, one worker', emptyTask);
  await bench.run();
  console.table(bench.table());
  // tinybench keeps latency in ms
  const task = bench.tasks[0].result as unknown as { latency?: { p50?: number; mean?: number } };
  results.roundTripMedianUs = (task.latency?.p50 ?? NaN) * 1000;
  line(`pool round trip, median: ${(results.roundTripMedianUs as number).toFixed(1)} µs`);
  await pool.destroy();
}

const pileupFile = join(dir, 'pileup200.events');
const pileupEvents = quick ? 600 : 1500;
const written = writeToyFile(pileupFile, pileupEvents, 200, 500);
line(`pileup-200 file: ${pileupEvents} events, ${(written.bytes / 1e6).toFixed(1)} MB, mean ${written.meanTowers.toFixed(0)} towers per event`);
const base: RunOptions = { input: pileupFile, check: { mode: 'none', fraction: 0, seed: 1 }, engine: 'wasm' };

// CPU seconds of all threads per event, against K: what a batch amortises (the per-task cost),
// and unlike events/s it does not move when other processes take the cores
if (!streamingOnly) {
  // the CPU of starting the pool and warming its engines, taken off each run
  const startupBefore = threadCpuSeconds();
  await runEvents({ ...base, workers: 2, maxEvents: 0 });
  const startupCpu = threadCpuSeconds() - startupBefore;
  const sweep: { batch: number; eventsPerSecond: number; cpuUsPerEvent: number }[] = [];
  for (const batch of [1, 2, 4, 8, 16, 32, 64, 128]) {
    const rates: number[] = [];
    const cpu: number[] = [];
    for (let r = 0; r < 3; r++) {
      const before = threadCpuSeconds();
      const summary = await runEvents({ ...base, workers: 2, batch });
      cpu.push(((threadCpuSeconds() - before - startupCpu) * 1e6) / summary.events.read);
      rates.push(summary.throughput.eventsPerSecond);
    }
    sweep.push({ batch, eventsPerSecond: median(rates), cpuUsPerEvent: median(cpu) });
    line(`batch ${String(batch).padStart(3)}: ${median(rates).toFixed(0)} events/s, ${median(cpu).toFixed(0)} µs CPU per event (medians of 3, 2 workers)`);
  }
  results.batchSweep = sweep;
}

// ---- 2. one against two workers -----------------------------------------------------------
// Beside events/s: CPU seconds of all threads per event (process.cpuUsage), and what the
// machine gives two busy threads at that moment (two spinning worker threads against one), so
// a ratio measured on a shared machine can be read against the cores actually free.
async function spinScaling(): Promise<number> {
  const source = 'const { parentPort } = require("node:worker_threads"); let x = 0; const t0 = Date.now(); for (let i = 0; i < 2e8; i++) x = (x + i * 7) % 1000003; parentPort.postMessage(Date.now() - t0 + x * 0);';
  const spin = (n: number) => Promise.all(Array.from({ length: n }, () => new Promise<number>((resolve) => {
    const worker = new Worker(source, { eval: true });
    worker.once('message', (ms: number) => { resolve(ms); void worker.terminate(); });
  })));
  const one = (await spin(1))[0];
  const two = await spin(2);
  return (2 * one) / Math.max(...two);
}
if (!streamingOnly) {
  const perWorkers: Record<number, number[]> = { 1: [], 2: [] };
  const cpuPerEvent: Record<number, number[]> = { 1: [], 2: [] };
  const machine: number[] = [];
  for (let r = 0; r < 3; r++) {
    machine.push(await spinScaling());
    for (const workers of [1, 2]) {
      const before = threadCpuSeconds();
      const summary = await runEvents({ ...base, workers });
      cpuPerEvent[workers].push(((threadCpuSeconds() - before) * 1e6) / summary.events.read);
      perWorkers[workers].push(summary.throughput.eventsPerSecond);
    }
  }
  const one = median(perWorkers[1]);
  const two = median(perWorkers[2]);
  results.workers = { one, two, ratio: two / one, cpuUsPerEvent: { one: median(cpuPerEvent[1]), two: median(cpuPerEvent[2]) }, machineTwoThreadScaling: median(machine) };
  line(`workers: 1 → ${one.toFixed(0)} events/s, 2 → ${two.toFixed(0)} events/s, ratio ${(two / one).toFixed(2)} (medians of 3); ` +
    `CPU per event ${median(cpuPerEvent[1]).toFixed(0)} µs with 1, ${median(cpuPerEvent[2]).toFixed(0)} µs with 2; ` +
    `two spinning threads got ${median(machine).toFixed(2)}× one at the time`);
}

// ---- 3. host overhead against clustering time -----------------------------------------
// The host's own cost per event: the main thread's CPU time (read, frame, copy, dispatch,
// collect, tally; from /proc/self/task/<pid>/stat, so other threads and other processes do not
// count) plus the workers' decode and bin stages, against the clustering time per event. The
// main thread's cost of starting the pool, measured by a run of zero events, is taken off.
/** CPU seconds of the main thread so far (Linux; 0 elsewhere). */
function mainThreadCpuSeconds(): number {
  try {
    const stat = readFileSync(`/proc/self/task/${process.pid}/stat`, 'utf8');
    const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
    return (Number(fields[11]) + Number(fields[12])) / 100; // utime + stime in clock ticks of 1/100 s
  } catch {
    return 0;
  }
}
if (!streamingOnly) {
  const startup0 = mainThreadCpuSeconds();
  await runEvents({ ...base, workers: 2, maxEvents: 0 });
  const startupSeconds = mainThreadCpuSeconds() - startup0;
  let mainSeconds = 0;
  let events = 0;
  let clusterNs = 0;
  let decodeBinNs = 0;
  for (let r = 0; r < 4; r++) {
    const before = mainThreadCpuSeconds();
    const summary = await runEvents({ ...base, workers: 2 });
    mainSeconds += mainThreadCpuSeconds() - before - startupSeconds;
    events += summary.events.read;
    clusterNs += summary.histograms.service.sumNs;
    decodeBinNs += summary.histograms.stages.decode.sumNs + summary.histograms.stages.bin.sumNs;
  }
  const mainUs = (mainSeconds * 1e6) / events;
  const workerUs = decodeBinNs / 1e3 / events;
  const clusterUs = clusterNs / 1e3 / events;
  results.hostOverhead = { mainThreadCpuUsPerEvent: mainUs, workerDecodeBinUsPerEvent: workerUs, clusterMeanUs: clusterUs, ratio: (mainUs + workerUs) / clusterUs, events };
  line(`host cost per event: main thread ${mainUs.toFixed(1)} µs CPU + worker decode and bin ${workerUs.toFixed(1)} µs ` +
    `against clustering ${clusterUs.toFixed(1)} µs: ${((100 * (mainUs + workerUs)) / clusterUs).toFixed(1)} % (${events} events)`);
}

// ---- 4. resident memory while streaming >= 1 GiB --------------------------------------------
if (!quick && !noStreaming) {
  const bigFile = join(dir, 'big.events');
  const bigEvents = 120_000;
  const big = writeToyFile(bigFile, bigEvents, 200, 500);
  line(`big file: ${(big.bytes / 2 ** 30).toFixed(2)} GiB, ${bigEvents} events`);
  let peakRss = 0;
  const sampler = setInterval(() => { peakRss = Math.max(peakRss, process.memoryUsage.rss()); }, 100);
  const startRss = process.memoryUsage.rss();
  const summary = await runEvents({ ...base, input: bigFile, workers: 2 });
  clearInterval(sampler);
  results.streaming = { fileBytes: statSync(bigFile).size, events: summary.events.read, eventsPerSecond: summary.throughput.eventsPerSecond, startRssMB: startRss / 2 ** 20, peakRssMB: peakRss / 2 ** 20 };
  line(`streaming ${(big.bytes / 2 ** 30).toFixed(2)} GiB: peak RSS ${(peakRss / 2 ** 20).toFixed(0)} MiB (at start ${(startRss / 2 ** 20).toFixed(0)} MiB), ${summary.throughput.eventsPerSecond.toFixed(0)} events/s`);
  rmSync(bigFile);
}

rmSync(dir, { recursive: true, force: true });
mkdirSync(new URL('../../bench/results/', import.meta.url), { recursive: true });
writeFileSync(new URL('../../bench/results/pool.json', import.meta.url), JSON.stringify(results, null, 2) + '\n');
