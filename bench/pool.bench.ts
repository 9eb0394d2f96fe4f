// Benchmarks of the streamed run (node dist/bench/pool.bench.js [--quick | --no-streaming | --streaming-only | --exec-pipe]
// after npm run build):
//   1. the pool's per-task round trip (tinybench), and events/s against the batch size K,
//      which chose run.ts's DEFAULT_BATCH;
//   2. 1 against 2 workers at pileup 200 (closed loop), median of alternating rounds;
//   3. the main thread's own CPU per event against the service time per event (closed loop);
//   4. open loop at half the sustained rate: dispatch lateness and end-to-end minus service per
//      event; then 1 against 2 workers in an open loop (the default worker count);
//   5. resident memory while streaming a generated file of at least 1 GiB (skipped by --quick).
// Events are invented (the toy generator, host/generate.ts). Figures go to stdout and to
// bench/results/pool.json (not committed). The machine is shared: quote medians and ratios.

import { mkdirSync, mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { Worker } from 'node:worker_threads';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Bench } from 'tinybench';
import { Piscina } from 'piscina';
import { DEFAULT_GRID } from '../host/types.js';
import { runEvents } from '../host/pipeline/run.js';
import type { RunOptions } from '../host/pipeline/run-plan.js';
import { workerFile } from '../host/pipeline/pool.js';
import { describeMachine, type RunSummary } from '../host/measure/summary.js';
import { LatencyRecorder } from '../host/measure/latency.js';
import { CPU_WAIT_DELAY_NS } from '../host/measure/run-tally.js';
import { writeToyEventFile } from './support/toy-event-file.js';

// `--exec-pipe`: an outside program as the engine instead (exec-pipe.bench.ts)
if (process.argv.includes('--exec-pipe')) {
  await import('./exec-pipe.bench.js');
  process.exit(0);
}

const quick = process.argv.includes('--quick');
/** sections 1-4 at full size, without the long streaming run */
const noStreaming = process.argv.includes('--no-streaming');
/** only section 5 (the long streaming run) */
const streamingOnly = process.argv.includes('--streaming-only');
const dir = mkdtempSync(join(tmpdir(), 'jetlag-bench-'));
const results: Record<string, unknown> = { machine: describeMachine() };

/** Writes `events` toy events of the given pileup, cycling through `distinct` generated ones. */
function line(text: string): void {
  process.stdout.write(text + '\n');
}

/** CPU seconds of every thread of this process so far, finished worker threads included (getrusage). */
function threadCpuSeconds(): number {
  const usage = process.cpuUsage();
  return (usage.user + usage.system) / 1e6;
}

/**
 * One run whose figures count only if every event was clustered: a failed batch (a worker that
 * could not start, say while dist/ is rebuilt beside the benchmark) makes events/s meaningless.
 * Such a run is repeated, up to twice.
 */
async function timedRun(options: RunOptions): Promise<RunSummary> {
  for (let attempt = 1; ; attempt++) {
    const summary = await runEvents(options);
    const { read, ok, failed, invalid } = summary.events;
    if (ok === read) return summary;
    const why = `${failed} failed and ${invalid} invalid of ${read} events${summary.failedBatches[0] ? ` (${summary.failedBatches[0].reason})` : ''}`;
    if (attempt === 3) throw new Error(`bench: a run kept losing events: ${why}`);
    line(`  (run repeated: ${why})`);
  }
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
const written = writeToyEventFile(pileupFile, { events: pileupEvents, pileup: 200, distinct: 500 });
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
      const summary = await timedRun({ ...base, workers: 2, batch });
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
/** CPU ns of the main thread so far, from the scheduler's own count (Linux; 0 elsewhere). */
function mainThreadCpuNs(): number {
  try {
    return Number(readFileSync(`/proc/self/task/${process.pid}/schedstat`, 'utf8').split(' ')[0]);
  } catch {
    return 0;
  }
}

/** Rounds of the 1- against 2-worker comparison; each round runs both, in turn. */
const ROUNDS = quick ? 3 : 5;
let closedTwoWorkersHz = 0;
let closedOneWorkerHz = 0;
if (!streamingOnly) {
  const perWorkers: Record<number, number[]> = { 1: [], 2: [] };
  const cpuPerEvent: Record<number, number[]> = { 1: [], 2: [] };
  const ratios: number[] = [];
  const machine: number[] = [];
  // the CPU of starting the pool and warming its engines (a run of no events), taken off each
  // run's CPU: it grows with the workers while the timed events do not include it
  const startupCpu: Record<number, number> = {};
  for (const workers of [1, 2]) {
    const before = threadCpuSeconds();
    await runEvents({ ...base, workers, maxEvents: 0 });
    startupCpu[workers] = threadCpuSeconds() - before;
  }
  for (let r = 0; r < ROUNDS; r++) {
    machine.push(await spinScaling());
    // the order alternates between rounds, so a machine growing busier favours neither
    for (const workers of r % 2 === 0 ? [1, 2] : [2, 1]) {
      const before = threadCpuSeconds();
      const summary = await timedRun({ ...base, workers });
      cpuPerEvent[workers].push(((threadCpuSeconds() - before - startupCpu[workers]) * 1e6) / summary.events.read);
      perWorkers[workers].push(summary.throughput.eventsPerSecond);
    }
    ratios.push(perWorkers[2][r] / perWorkers[1][r]);
  }
  closedOneWorkerHz = median(perWorkers[1]);
  closedTwoWorkersHz = median(perWorkers[2]);
  results.workers = {
    one: closedOneWorkerHz, two: closedTwoWorkersHz, ratioMedianOfRounds: median(ratios), ratios,
    cpuUsPerEvent: { one: median(cpuPerEvent[1]), two: median(cpuPerEvent[2]) }, machineTwoThreadScaling: median(machine),
  };
  line(`closed loop, workers: 1 → ${closedOneWorkerHz.toFixed(0)} events/s, 2 → ${closedTwoWorkersHz.toFixed(0)} events/s; ` +
    `2 against 1: median ${median(ratios).toFixed(2)}× of ${ROUNDS} alternating rounds (${ratios.map((x) => x.toFixed(2)).join(', ')}); ` +
    `CPU per event (all threads, start-up taken off: ${(startupCpu[1] * 1e3).toFixed(0)} and ${(startupCpu[2] * 1e3).toFixed(0)} ms) ${median(cpuPerEvent[1]).toFixed(0)} µs with 1, ${median(cpuPerEvent[2]).toFixed(0)} µs with 2; ` +
    `two spinning threads got ${median(machine).toFixed(2)}× one at the time`);
}

// ---- 3. the main thread's own cost against service time ------------------------------------
// The main thread's CPU time (read, frame, copy, dispatch, collect, tally; the scheduler's count
// for that thread alone, so workers and other processes do not count), per event, against the
// mean service time; the cost of starting the pool, measured by a run of zero events, is taken
// off. The workers' decode and bin stages are shown beside it.
if (!streamingOnly) {
  const startup0 = mainThreadCpuNs();
  await runEvents({ ...base, workers: 2, maxEvents: 0 });
  const startupNs = mainThreadCpuNs() - startup0;
  let mainNs = 0;
  let events = 0;
  let serviceNs = 0;
  let decodeBinNs = 0;
  // the steady state alone: from the first event's delivery to the last's (no start-up, no summary)
  let steadyNs = 0;
  let steadyEvents = 0;
  for (let r = 0; r < 4; r++) {
    let delivered = 0;
    let firstNs = 0;
    let lastNs = 0;
    const before = mainThreadCpuNs();
    const summary = await timedRun({
      ...base, workers: 2,
      onEvent: () => { if (++delivered === 1) firstNs = mainThreadCpuNs(); else if (delivered === pileupEvents) lastNs = mainThreadCpuNs(); },
    });
    if (lastNs > firstNs) { steadyNs += lastNs - firstNs; steadyEvents += pileupEvents - 1; }
    mainNs += mainThreadCpuNs() - before - startupNs;
    events += summary.events.read;
    serviceNs += summary.histograms.service.sumNs;
    decodeBinNs += summary.histograms.stages.decode.sumNs + summary.histograms.stages.bin.sumNs;
  }
  const mainUs = mainNs / 1e3 / events;
  const workerUs = decodeBinNs / 1e3 / events;
  const serviceUs = serviceNs / 1e3 / events;
  const steadyUs = steadyEvents > 0 ? steadyNs / 1e3 / steadyEvents : NaN;
  results.hostOverhead = {
    mainThreadCpuUsPerEvent: mainUs, mainThreadSteadyCpuUsPerEvent: steadyUs, workerDecodeBinUsPerEvent: workerUs, serviceMeanUs: serviceUs,
    mainThreadShare: mainUs / serviceUs, mainThreadSteadyShare: steadyUs / serviceUs, events,
  };
  line(`closed loop, main thread's own CPU per event ${mainUs.toFixed(1)} µs against ${serviceUs.toFixed(1)} µs of service: ` +
    `${((100 * mainUs) / serviceUs).toFixed(1)} % (the whole run less start-up; from the first event's delivery to the last's alone ` +
    `${steadyUs.toFixed(1)} µs, ${((100 * steadyUs) / serviceUs).toFixed(1)} %); workers' decode and bin ${workerUs.toFixed(1)} µs (${events} events, 2 workers)`);
}

// ---- 4. open loop at half the sustained rate --------------------------------------------------
// Per event: end-to-end minus service (wait for a worker, the engine call around the engine's
// own timer, encode, the result's slot write and the main thread's wake-up to read it:
// event-results.ts), and the harness's dispatch
// lateness (open-loop-feed.ts), at half the closed loop's events/s. Then 1 against 2 workers at
// half of what one worker sustains, both well below capacity: whether a worker per core
// (the main thread sharing a core with a worker) or cores - 1 workers gives the lower overhead.
// 5000 events (several seconds a run): a p99 of the first second alone is mostly start-up
const openLoopEvents = quick ? 600 : 5000;
const openLoopFile = join(dir, 'pileup200-open-loop.events');
if (!streamingOnly) writeToyEventFile(openLoopFile, { events: openLoopEvents, pileup: 200, distinct: 500 });
async function openLoopRound(workers: number, rateHz: number, cpuWaitPerEvent = false) {
  const overhead = new LatencyRecorder();
  const summary = await timedRun({
    ...base, input: openLoopFile, workers, maxEvents: openLoopEvents, arrival: { kind: 'fixed', rateHz }, cpuWaitPerEvent,
    onEvent: (_event, _towers, serviceNs, scheduledNs, _startNs, doneNs) => overhead.recordNs(doneNs - scheduledNs - serviceNs),
  });
  return { summary, overhead: overhead.stats(), lateness: summary.harness.dispatchLateness };
}
const us = (value: number | null) => (value === null ? '—' : value.toFixed(value < 100 ? 1 : 0));
if (!streamingOnly) {
  const halfHz = (closedTwoWorkersHz || 1000) / 2;
  const rounds: Awaited<ReturnType<typeof openLoopRound>>[] = [];
  for (let r = 0; r < 3; r++) rounds.push(await openLoopRound(2, halfHz));
  const pick = (f: (x: (typeof rounds)[number]) => number | null) => median(rounds.map((x) => f(x) ?? NaN));
  const figures = {
    rateHz: halfHz,
    latenessP50Us: pick((x) => x.lateness.p50_us), latenessP99Us: pick((x) => x.lateness.p99_us),
    overheadP50Us: pick((x) => x.overhead.p50_us), overheadP99Us: pick((x) => x.overhead.p99_us),
    waitP50Us: pick((x) => x.summary.latency.wait.p50_us), returnP50Us: pick((x) => x.summary.latency.return.p50_us),
    serviceP50Us: pick((x) => x.summary.latency.service.p50_us),
    // the events whose threads did not wait for a CPU (thread-cpu-wait.ts): the harness's own share
    workersCpuWaitMs: pick((x) => x.summary.harness.cpuWait?.workersMs ?? null),
    mainCpuWaitMs: pick((x) => x.summary.harness.cpuWait?.mainMs ?? null),
    wallSeconds: pick((x) => x.summary.throughput.wallSeconds),
    loadAverages: rounds.map((x) => x.summary.machineLoad?.loadAverageStart ?? null),
  };
  results.openLoop = figures;
  line(`open loop, 2 workers at ${halfHz.toFixed(0)} Hz (half the closed loop's events/s), ${openLoopEvents} events, medians of 3 runs: ` +
    `dispatch lateness p50 ${us(figures.latenessP50Us)} µs, p99 ${us(figures.latenessP99Us)} µs; ` +
    `end-to-end minus service p50 ${us(figures.overheadP50Us)} µs, p99 ${us(figures.overheadP99Us)} µs ` +
    `(wait p50 ${us(figures.waitP50Us)}, return p50 ${us(figures.returnP50Us)}; service p50 ${us(figures.serviceP50Us)} µs); ` +
    `load average ${figures.loadAverages.map((x) => x?.toFixed(1)).join(', ')}`);
  line(`  the same runs, the threads' wait for a CPU (Linux run-queue time; medians): workers ${figures.workersCpuWaitMs?.toFixed(0)} ms in all ` +
    `over ${figures.wallSeconds.toFixed(1)} s, main thread ${figures.mainCpuWaitMs?.toFixed(0)} ms`);

  // the same rate with each event's wait for a CPU read (run --cpu-wait-per-event): which events
  // the machine delayed, and the overhead of the others
  const perEventRounds: Awaited<ReturnType<typeof openLoopRound>>[] = [];
  for (let r = 0; r < 3; r++) perEventRounds.push(await openLoopRound(2, halfHz, true));
  const perEventPick = (f: (x: NonNullable<RunSummary['harness']['cpuWait']>['perEvent']) => number | null | undefined) =>
    median(perEventRounds.map((x) => f(x.summary.harness.cpuWait?.perEvent) ?? NaN));
  const perEvent = {
    delayedPercent: perEventPick((x) => (x ? (100 * x.delayed) / x.events : null)),
    cpuWaitP50Us: perEventPick((x) => x?.wait.p50_us), cpuWaitP99Us: perEventPick((x) => x?.wait.p99_us),
    undelayedP50Us: perEventPick((x) => x?.overheadUndelayed.p50_us), undelayedP99Us: perEventPick((x) => x?.overheadUndelayed.p99_us),
    overheadP50Us: median(perEventRounds.map((x) => x.overhead.p50_us ?? NaN)), overheadP99Us: median(perEventRounds.map((x) => x.overhead.p99_us ?? NaN)),
  };
  results.openLoopCpuWaitPerEvent = perEvent;
  line(`  with each event's CPU wait read (--cpu-wait-per-event), medians of 3 runs: ${perEvent.delayedPercent.toFixed(1)} % of events waited over ` +
    `${CPU_WAIT_DELAY_NS / 1e3} µs for a CPU on their threads (CPU wait p50 ${us(perEvent.cpuWaitP50Us)}, p99 ${us(perEvent.cpuWaitP99Us)} µs); ` +
    `end-to-end minus service p50 ${us(perEvent.overheadP50Us)}, p99 ${us(perEvent.overheadP99Us)} µs; of the events not delayed p50 ${us(perEvent.undelayedP50Us)}, p99 ${us(perEvent.undelayedP99Us)} µs`);

  const lowHz = (closedOneWorkerHz || 500) / 2;
  const byWorkers: Record<number, { overheadP50: number[]; overheadP99: number[]; latenessP50: number[] }> = {
    1: { overheadP50: [], overheadP99: [], latenessP50: [] }, 2: { overheadP50: [], overheadP99: [], latenessP50: [] },
  };
  for (let r = 0; r < 3; r++) {
    for (const workers of r % 2 === 0 ? [1, 2] : [2, 1]) {
      const round = await openLoopRound(workers, lowHz);
      byWorkers[workers].overheadP50.push(round.overhead.p50_us ?? NaN);
      byWorkers[workers].overheadP99.push(round.overhead.p99_us ?? NaN);
      byWorkers[workers].latenessP50.push(round.lateness.p50_us ?? NaN);
    }
  }
  const summaryOf = (w: number) => ({
    overheadP50Us: median(byWorkers[w].overheadP50), overheadP99Us: median(byWorkers[w].overheadP99), latenessP50Us: median(byWorkers[w].latenessP50),
  });
  results.openLoopWorkers = { rateHz: lowHz, one: summaryOf(1), two: summaryOf(2) };
  line(`open loop at ${lowHz.toFixed(0)} Hz (half of one worker's events/s), end-to-end minus service p50/p99: ` +
    `1 worker ${us(summaryOf(1).overheadP50Us)}/${us(summaryOf(1).overheadP99Us)} µs, 2 workers ${us(summaryOf(2).overheadP50Us)}/${us(summaryOf(2).overheadP99Us)} µs; ` +
    `dispatch lateness p50 1 worker ${us(summaryOf(1).latenessP50Us)} µs, 2 workers ${us(summaryOf(2).latenessP50Us)} µs (medians of 3 alternating rounds)`);
}

// ---- 5. resident memory while streaming >= 1 GiB --------------------------------------------
if (!quick && !noStreaming) {
  const bigFile = join(dir, 'big.events');
  const bigEvents = 120_000;
  const big = writeToyEventFile(bigFile, { events: bigEvents, pileup: 200, distinct: 500 });
  line(`big file: ${(big.bytes / 2 ** 30).toFixed(2)} GiB, ${bigEvents} events`);
  let peakRss = 0;
  const sampler = setInterval(() => { peakRss = Math.max(peakRss, process.memoryUsage.rss()); }, 100);
  const startRss = process.memoryUsage.rss();
  const summary = await timedRun({ ...base, input: bigFile, workers: 2 });
  clearInterval(sampler);
  results.streaming = { fileBytes: statSync(bigFile).size, events: summary.events.read, eventsPerSecond: summary.throughput.eventsPerSecond, startRssMB: startRss / 2 ** 20, peakRssMB: peakRss / 2 ** 20 };
  line(`streaming ${(big.bytes / 2 ** 30).toFixed(2)} GiB: peak RSS ${(peakRss / 2 ** 20).toFixed(0)} MiB (at start ${(startRss / 2 ** 20).toFixed(0)} MiB), ${summary.throughput.eventsPerSecond.toFixed(0)} events/s`);
  rmSync(bigFile);
}

rmSync(dir, { recursive: true, force: true });
mkdirSync(new URL('../../bench/results/', import.meta.url), { recursive: true });
writeFileSync(new URL('../../bench/results/pool.json', import.meta.url), JSON.stringify(results, null, 2) + '\n');
