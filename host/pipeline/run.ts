// The streamed run: file -> records -> batches -> workers -> results -> tally -> summary.
// runEvents() is the programmatic entry (commands/run.ts and the demo call it). One run reads
// the input once; --find-rate and --scan-workers repeat runs (runStudies below).
//
// Latency starts, per event: closed loop, when its batch is handed to the pool; open loop,
// at its scheduled arrival (arrivals.ts). It ends when the batch's result reaches the main
// thread. Events whose results wait for an earlier batch before being written in input order
// are not charged for that wait: in-order output is a property of the file, not of a trigger.

import { closeSync, openSync, readSync, statSync } from 'node:fs';
import { openEventSource } from '../input/event-source.js';
import { InputError, UsageError } from '../errors.js';
import { loadEngineModule, WasmClusterer } from '../clustering/engine.js';
import { ArrivalSchedule, nowNs, sleepUntilNs, type ArrivalMode } from './arrivals.js';
import { BatchBuilder, BatchPool, type BatchOutcome } from './pool.js';
import { resultViews, STAGE_COUNT, STATUS_OK, type WorkerConfig } from './worker.js';
import { describeMachine, renderSummary, type RunConfiguration, type RunSummary } from '../measure/summary.js';
import { RunTally, STAGES } from '../measure/run-tally.js';
import { ProgressBar } from '../measure/progress.js';
import { DEFAULT_SETTINGS, type ClusterSettings, type Grid } from '../types.js';
import { describeDifference } from '../validate/bit-exact.js';
import { encodeJetsFileHeader } from '../formats/jets-codec.js';
import { ReproWriter } from '../output/repro-writer.js';
import { OutputFile } from '../output/record-writer.js';
import { producerName } from '../version.js';

/**
 * Default events per batch, chosen with bench/pool.bench.ts on this 2-core machine (pileup-200
 * toy events, ~920 towers, 2 workers; CPU time of all threads per event, medians of 3, which
 * other processes on the shared machine move less than they move events/s). Two runs:
 *   K =        1     2     4     8    16    32    64   128
 *   run A   2000  2110  1771  1950  1608  1453  1457  1429  µs (600 events)
 *   run B   1751  1668  1451  1410  1397  1437  1302  1292  µs (1500 events)
 * The per-task cost (pool round trip 19-54 µs median, tinybench) is paid off from 16-32 on;
 * larger batches only lengthen the closed-loop wait. An open-loop run sends whatever is due,
 * up to K, so K does not delay its events.
 */
export const DEFAULT_BATCH = 32;

export interface CheckOption {
  mode: 'all' | 'fraction' | 'none';
  fraction: number;
  seed: number;
}

export interface RunOptions {
  /** event file path, '-' for stdin */
  input: string;
  workers?: number;
  batch?: number;
  arrival?: ArrivalMode;
  budgetUs?: number | null;
  check?: CheckOption;
  settings?: ClusterSettings;
  engine?: WorkerConfig['engine'];
  shard?: { index: number; count: number };
  /** jets file to write (temporary name, renamed when complete) */
  out?: string | null;
  /** grid of a CSV tower file (an event file carries its own) */
  grid?: Grid;
  /** event file of the events on which the engine and the reference disagree (repro-writer.ts) */
  repro?: string | null;
  /** stop after this many event records (of the whole file, before sharding) */
  maxEvents?: number | null;
  /** aborting stops reading; what is in flight is drained and the summary is marked partial */
  signal?: AbortSignal;
  /** progress bar output, when wanted */
  progress?: NodeJS.WritableStream | null;
  /** one line per problem (invalid event, failed batch, check difference); the caller limits them */
  onProblem?: (line: string) => void;
  /** batches out at once (default 2 per worker, so a worker never waits for the host) */
  maxInFlight?: number;
}

export const DEFAULT_CHECK: CheckOption = { mode: 'fraction', fraction: 0.01, seed: 1 };

function defaultWorkers(): number {
  return describeMachine().cores;
}

function isGzipFile(path: string): boolean {
  const fd = openSync(path, 'r');
  try {
    const magic = Buffer.alloc(2);
    return readSync(fd, magic, 0, 2, 0) === 2 && magic[0] === 0x1f && magic[1] === 0x8b;
  } finally {
    closeSync(fd);
  }
}

export async function runEvents(options: RunOptions): Promise<RunSummary> {
  const workers = options.workers ?? defaultWorkers();
  const batch = options.batch ?? DEFAULT_BATCH;
  const arrival = options.arrival ?? { kind: 'closed' };
  const check = options.check ?? DEFAULT_CHECK;
  const settings = options.settings ?? { ...DEFAULT_SETTINGS };
  const shard = options.shard ?? { index: 0, count: 1 };
  const budgetUs = options.budgetUs ?? null;
  const budgetNs = budgetUs === null ? Infinity : budgetUs * 1000;
  if (!Number.isInteger(batch) || batch < 1) throw new TypeError(`batch must be a positive integer, got ${batch}`);
  if (!Number.isInteger(shard.count) || shard.count < 1 || !Number.isInteger(shard.index) || shard.index < 0 || shard.index >= shard.count) {
    throw new TypeError(`shard must be k/n with 0 <= k < n, got ${shard.index}/${shard.count}`);
  }
  const label = options.input === '-' ? '<stdin>' : options.input;
  const schedule = new ArrivalSchedule(arrival);

  const source = await openEventSource(options.input, { fileLabel: label, grid: options.grid });
  const records = source.records;
  const grid: Grid = source.header.grid;
  if ((options.engine ?? 'wasm') === 'wasm') {
    // refuse up front, in one line, what the workers' engines would refuse (or a missing
    // build), rather than failing every batch or timing some other clusterer
    const module = loadEngineModule(); // a missing build says so itself
    try {
      new WasmClusterer(grid, settings, { module });
    } catch (error) {
      throw new UsageError(`run: the engine cannot cluster with these settings: ${(error as Error).message}`);
    }
  }

  // the bar's ETA compares record offsets with the file size, so it needs an uncompressed
  // file read to its end; for gzip (offsets count inflated bytes), stdin and --events it
  // shows events and rate only
  let bytesTotal = 0;
  if (options.input !== '-') {
    try { if (!isGzipFile(options.input) && options.maxEvents == null) bytesTotal = statSync(options.input).size; } catch { bytesTotal = 0; }
  }
  const tally = new RunTally();
  const problem = (line: string) => {
    if (options.onProblem) options.onProblem(line);
  };
  let engineName = options.engine === 'reference' ? 'reference' : 'wasm';
  const config: WorkerConfig = {
    grid,
    settings,
    engine: options.engine ?? 'wasm',
    checkFraction: check.mode === 'all' ? 1 : check.mode === 'none' ? 0 : check.fraction,
    checkSeed: check.seed,
    encodeJets: Boolean(options.out),
  };
  // opened before the run, so an output that cannot be written costs no run; written under a
  // temporary name and renamed when complete ('-' is stdout)
  const jetsFile = options.out ? await OutputFile.open(options.out) : null;
  let jetsPending: Promise<void> | undefined;
  if (jetsFile) {
    jetsPending = jetsFile.write(encodeJetsFileHeader(grid, { ...settings, engine: engineName }, { producer: producerName('run'), label: source.header.label }));
  }

  const repro = options.repro ? await ReproWriter.open(options.repro, { grid, source: label, engine: options.engine === 'reference' ? 'reference' : 'wasm' }) : null;
  const reproPending: Promise<void>[] = [];

  const deliver = (outcome: BatchOutcome) => {
    const { count, result } = outcome;
    tally.read += count;
    if (result === null) {
      tally.addFailedBatch({ firstRecord: outcome.firstRecord, events: count, offset: outcome.recordOffsets[0], reason: outcome.failure ?? 'unknown failure' });
      problem(`${label}, records ${outcome.firstRecord}..${outcome.firstRecord + count - 1}, byte ${outcome.recordOffsets[0]}: batch failed: ${outcome.failure}`);
      return;
    }
    engineName = result.engine;
    const views = resultViews(result.buffer, count);
    const invalidReasons = new Map<number, string>();
    for (const entry of result.invalid) invalidReasons.set(entry.index, entry.reason);
    for (let k = 0; k < count; k++) {
      const stage = k * STAGE_COUNT;
      if (views.status[k] !== STATUS_OK) {
        const event = views.eventNumber[k] >= 0 ? views.eventNumber[k] : null;
        const reason = invalidReasons.get(k) ?? 'invalid';
        tally.addInvalid({ event, record: outcome.firstRecord + k, offset: outcome.recordOffsets[k], reason });
        problem(`${label}, ${event === null ? `record ${outcome.firstRecord + k}` : `event ${event}`}, byte ${outcome.recordOffsets[k]}: ${reason}`);
        continue;
      }
      tally.ok++;
      const clusterNs = views.stageNs[stage + 2];
      tally.cluster.recordNs(clusterNs);
      for (let s = 0; s < STAGE_COUNT; s++) {
        const value = views.stageNs[stage + s];
        // stages that did not run for this event (check not sampled, no jets file) are not recorded
        if (s >= 3 && value === 0) continue;
        tally.stages[STAGES[s]].recordNs(value);
      }
      tally.multiplicity.record(views.towersClustered[k], clusterNs);
      const endToEndNs = outcome.finishedNs - outcome.startNs[k];
      tally.endToEnd.recordNs(endToEndNs);
      // a closed loop has no arrivals: its events wait for the batches before them by design,
      // so the budget is held against the event's own time in the worker; the reference check
      // is validation of the tool's engine, not work a trigger would do, so it is left out
      let workerNs = 0;
      for (let s = 0; s < STAGE_COUNT; s++) if (STAGES[s] !== 'check') workerNs += views.stageNs[stage + s];
      if ((schedule.openLoop ? endToEndNs : workerNs) > budgetNs) tally.overBudget++;
    }
    tally.jets += result.jets;
    tally.towers.offered += result.towersOffered;
    tally.towers.belowThreshold += result.towersBelowThreshold;
    tally.towers.outsideAcceptance += result.towersOutsideAcceptance;
    tally.towers.clustered += result.towersOffered - result.towersBelowThreshold;
    tally.check.checked += result.checked;
    tally.check.agreeing += result.agreeing;
    tally.check.disagreeing += result.checked - result.agreeing;
    for (const difference of result.differences) {
      tally.addDifference(difference);
      problem(`${label}: check: ${describeDifference(difference.event, difference)}`);
    }
    if (repro) {
      for (const { event, bytes } of result.disagreeing) {
        try {
          const pending = repro.writeRecord(event, bytes);
          if (pending) reproPending.push(pending);
        } catch (error) {
          problem(`${label}, event ${event}: not written to ${options.repro}: ${(error as Error).message}`);
        }
      }
    }
    if (jetsFile && result.jetsBytes) {
      // the stream queues what it cannot take yet; the reader waits on this before the next batch
      const pending = jetsFile.write(result.jetsBytes);
      if (pending) jetsPending = pending;
    }
  };

  let lastOffset = 0;
  const pool = new BatchPool({ workers, maxInFlight: options.maxInFlight ?? 2 * workers, config, deliver });
  // threads and engines are made before the clock starts: start-up is not throughput
  await pool.warmUp(workers);
  const progress = new ProgressBar(options.progress ?? process.stderr, { eventsDone: () => tally.read, bytesDone: () => lastOffset }, bytesTotal, Boolean(options.progress));
  let partialReason: string | null = null;
  let inputError: InputError | null = null;
  const builder = new BatchBuilder();
  let dispatchIndex = 0;
  let ordinal = 0; // event records seen in the file
  let builderFirstRecord = 0;
  const builderStartNs: number[] = [];
  const startNs = nowNs();
  let endNs = startNs;

  const send = async () => {
    if (jetsPending) { await jetsPending; jetsPending = undefined; }
    await pool.waitForRoom();
    const sealed = builder.seal(dispatchIndex++);
    const starts = new Float64Array(sealed.task.count);
    const dispatchNs = nowNs();
    if (schedule.openLoop) {
      for (let k = 0; k < starts.length; k++) {
        starts[k] = builderStartNs[k];
        tally.dispatchLag.recordNs(dispatchNs - builderStartNs[k]);
      }
    } else starts.fill(dispatchNs);
    builderStartNs.length = 0;
    pool.dispatch(sealed, builderFirstRecord, starts);
  };

  progress.start();
  try {
    try {
      for await (const record of records) {
        if (options.signal?.aborted) { partialReason = 'interrupted: reading stopped, batches in flight drained'; break; }
        if (options.maxEvents != null && ordinal >= options.maxEvents) break;
        const record0 = ordinal++;
        lastOffset = record.offset;
        // shards take every n-th group of `batch` records, whatever the run's timing
        if (Math.floor(record0 / batch) % shard.count !== shard.index) continue;
        if (schedule.openLoop) {
          const dueNs = startNs + schedule.next();
          // events already due go now rather than wait for this one
          if (builder.count > 0 && (builder.count >= batch || dueNs > nowNs())) await send();
          await sleepUntilNs(dueNs);
          if (builder.count === 0) builderFirstRecord = record0;
          builder.add(record.bytes, record.offset);
          builderStartNs.push(dueNs);
        } else {
          if (builder.count === 0) builderFirstRecord = record0;
          builder.add(record.bytes, record.offset);
          if (builder.count >= batch) await send();
        }
      }
    } catch (error) {
      if (!(error instanceof InputError)) throw error;
      // the rest of the file is unreadable: keep what came before it
      inputError = error;
      partialReason = `input unreadable from here on: ${error.message}`;
    }
    if (builder.count > 0) await send();
    await pool.drain();
    endNs = nowNs();
    if (jetsPending) await jetsPending;
  } catch (error) {
    await jetsFile?.abort();
    await repro?.abort();
    throw error;
  } finally {
    progress.stop();
    await pool.close();
  }
  if (repro) {
    await Promise.all(reproPending);
    await repro.close();
  }
  const wallSeconds = (endNs - startNs) / 1e9;
  tally.bytesRead = lastOffset;
  await jetsFile?.close();

  const configuration: RunConfiguration = {
    file: label,
    engine: engineName,
    grid: { ...grid },
    settings: { ...settings },
    workers,
    batch,
    arrival: {
      mode: arrival.kind,
      rateHz: arrival.kind === 'closed' ? null : arrival.rateHz,
      seed: arrival.kind === 'poisson' ? arrival.seed : null,
    },
    budgetUs,
    check: { mode: check.mode, fraction: config.checkFraction, seed: check.seed },
    shard,
    maxEvents: options.maxEvents ?? null,
    out: options.out ?? null,
    // what tells one input from another when shards are merged (paths differ between nodes)
    input: { label: source.header.label, records: partialReason === null ? ordinal : null },
  };
  const summary = renderSummary(tally, {
    configuration,
    shards: [shard],
    machine: describeMachine(),
    partial: partialReason !== null,
    partialReason,
    wallSeconds,
  });
  if (inputError) Object.defineProperty(summary, 'inputError', { value: inputError, enumerable: false });
  return summary;
}

/** The input error that cut a run short, if any (kept off the JSON). */
export function inputErrorOf(summary: RunSummary): InputError | null {
  return (summary as unknown as { inputError?: InputError }).inputError ?? null;
}

/**
 * --find-rate: the highest open-loop rate whose end-to-end p99 stays within the budget,
 * by bisection in log(rate) between 2 % and 100 % of the closed-loop events/s.
 */
export async function findRate(options: RunOptions, closedLoop: RunSummary, budgetUs: number, poisson: boolean, trials = 7) {
  const ceiling = Math.max(1, closedLoop.throughput.eventsPerSecond);
  const runAt = async (rateHz: number) => {
    const arrival: ArrivalMode = poisson ? { kind: 'poisson', rateHz, seed: 1 } : { kind: 'fixed', rateHz };
    const summary = await runEvents({ ...options, arrival, out: null, progress: null, onProblem: undefined });
    const p99 = summary.latency.endToEnd.p99_us;
    return { rateHz, p99_us: p99, withinBudget: p99 !== null && p99 <= budgetUs, events: summary.events.read };
  };
  const results: { rateHz: number; p99_us: number | null; withinBudget: boolean; events: number }[] = [];
  let low = ceiling * 0.02;
  let high = ceiling;
  const lowTrial = await runAt(low);
  results.push(lowTrial);
  if (!lowTrial.withinBudget) return { budgetUs, rateHz: null, trials: results };
  let best = low;
  const highTrial = await runAt(high);
  results.push(highTrial);
  if (highTrial.withinBudget) return { budgetUs, rateHz: high, trials: results };
  for (let k = 2; k < trials; k++) {
    const mid = Math.sqrt(low * high);
    const trial = await runAt(mid);
    results.push(trial);
    if (trial.withinBudget) { best = mid; low = mid; } else high = mid;
  }
  return { budgetUs, rateHz: best, trials: results };
}

/** --scan-workers: closed-loop events/s for 1 .. cores workers. */
export async function scanWorkers(options: RunOptions, cores: number) {
  const points: { workers: number; eventsPerSecond: number; speedup: number; cluster_p50_us: number | null; endToEnd_p99_us: number | null }[] = [];
  for (let workers = 1; workers <= cores; workers++) {
    const summary = await runEvents({ ...options, workers, arrival: { kind: 'closed' }, out: null, progress: null, onProblem: undefined });
    const eventsPerSecond = summary.throughput.eventsPerSecond;
    points.push({
      workers,
      eventsPerSecond,
      speedup: points.length ? eventsPerSecond / points[0].eventsPerSecond : 1,
      cluster_p50_us: summary.latency.cluster.p50_us,
      endToEnd_p99_us: summary.latency.endToEnd.p99_us,
    });
  }
  return { points };
}
