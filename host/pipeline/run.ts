// The streamed run: file -> records -> batches -> workers -> results -> tally -> summary.
// runEvents() is the programmatic entry (commands/run.ts and the demo call it). One run reads
// the input once; --find-rate and --scan-workers repeat runs (studies.ts). The steps of a run:
//   planRun -> open the input -> refuse an unusable engine -> openOutputs -> pool and warm-up
//   -> the timed pass: closed loop, RecordFeed.feed (run-feed.ts: records into batches,
//      batches to the pool); open loop, OpenLoopFeed.feed (open-loop-feed.ts: each event to a
//      worker at its scheduled arrival)
//   -> RunDelivery.deliver per batch or event (run-delivery.ts: tally, problem lines, outputs)
//   -> the check pass (check-pass.ts: the --check sample against the reference, untimed)
//   -> close the outputs -> summarize
//
// A closed loop measures capacity: events/s and each event's service time in its worker. An
// open loop measures latency under load: per event from its scheduled arrival (arrivals.ts) to
// its result back on the main thread. Events whose results wait for an earlier one before being
// written in input order are not charged for that wait: in-order output is a property of the
// file, not of a trigger.

import { closeSync, openSync, readSync, statSync } from 'node:fs';
import { openEventSource } from '../input/event-source.js';
import { InputError, UsageError } from '../errors.js';
import { loadEngineModule } from '../clustering/engine-module.js';
import { WasmClusterer } from '../clustering/engine.js';
import { makeClusterer, type EngineName } from '../clustering/clusterers.js';
import { pileupStepsOn } from '../clustering/pileup/settings.js';
import { groomingIsOn } from '../clustering/grooming/settings.js';
import { ArrivalSchedule, nowNs, type ArrivalMode } from './arrivals.js';
import { BatchPool } from './pool.js';
import { RecordFeed } from './run-feed.js';
import { RunDelivery, type EventObserver } from './run-delivery.js';
import { OpenLoopFeed } from './open-loop-feed.js';
import { runCheckPass } from './check-pass.js';
import { DEFAULT_MAX_RECORD_BYTES } from '../input/record-framer.js';
import { MachineLoadProbe } from '../measure/machine-load.js';
import { shardInput } from './shard-input.js';
import type { WorkerConfig } from './worker-contract.js';
import type { ExecWorkerConfig } from './exec-run-contract.js';
import { ExecEngineError } from './exec-engine.js';
import { describeMachine, renderSummary, type RunConfiguration, type RunSummary } from '../measure/summary.js';
import { ProgressBar } from '../measure/progress.js';
import { DEFAULT_SETTINGS, type ClusterSettings, type Grid, type GroomingSettings, type PileupSettings } from '../types.js';
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
  /** the pileup steps around the clustering (spec part two); none when absent */
  pileup?: PileupSettings | null;
  /** trimming and soft drop of each reported jet (spec section 12); none when absent */
  grooming?: GroomingSettings | null;
  engine?: WorkerConfig['engine'];
  shard?: { index: number; count: number };
  /** jets file to write (temporary name, renamed when complete) */
  out?: string | null;
  /** grid of a CSV tower file (an event file carries its own) */
  grid?: Grid;
  /** CSV towers: the largest jump of event numbers (csv-towers.ts) */
  maxEventGap?: number;
  /** replace output files that exist (--out, --repro) */
  force?: boolean;
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
  /** every clustered event, in input order (run-delivery.ts) */
  onEvent?: EventObserver;
  /** batches out at once (default 2 per worker, so a worker never waits for the host) */
  maxInFlight?: number;
  /** the pool's worker script (default: the product worker); tests run one with planted faults */
  workerFile?: string;
  /**
   * `--engine exec:…`: each worker runs this program as its engine (exec-batch.ts); the check
   * runs in the workers after each answer, bit for bit or in tolerance mode.
   */
  program?: ExecWorkerConfig | null;
}

export const DEFAULT_CHECK: CheckOption = { mode: 'fraction', fraction: 0.01, seed: 1 };

/**
 * Default workers. A closed loop measures capacity: its workers never wait for the main
 * thread (two batches each are out), whose own CPU is ~2 % of the service time
 * (bench/pool.bench.ts), so one worker per core. An open loop measures latency: each event's
 * result must be taken by the main thread as it comes back, and a worker per core leaves the
 * main thread to take a core from a worker or wait for one; measured at the same rate, 716 Hz
 * of pileup-200 events on 2 cores, end-to-end minus service p50 204 µs / p99 29 ms with one
 * worker against 257 µs / 43 ms with two (a shared machine, load 6). So cores - 1, at least 1.
 */
export function defaultWorkers(openLoop: boolean): number {
  const cores = describeMachine().cores;
  return openLoop ? Math.max(1, cores - 1) : cores;
}

/** A run's options with their defaults filled in and checked. */
interface RunPlan {
  label: string;
  workers: number;
  batch: number;
  arrival: ArrivalMode;
  check: CheckOption;
  settings: ClusterSettings;
  /** null when no pileup step runs */
  pileup: PileupSettings | null;
  /** null when no groomer runs */
  grooming: GroomingSettings | null;
  engine: EngineName;
  shard: { index: number; count: number };
  budgetUs: number | null;
  budgetNs: number;
}

function planRun(options: RunOptions): RunPlan {
  const workers = options.workers ?? defaultWorkers((options.arrival ?? { kind: 'closed' }).kind !== 'closed');
  const batch = options.batch ?? DEFAULT_BATCH;
  const shard = options.shard ?? { index: 0, count: 1 };
  const budgetUs = options.budgetUs ?? null;
  if (!Number.isInteger(batch) || batch < 1) throw new TypeError(`batch must be a positive integer, got ${batch}`);
  if (!Number.isInteger(shard.count) || shard.count < 1 || !Number.isInteger(shard.index) || shard.index < 0 || shard.index >= shard.count) {
    throw new TypeError(`shard must be k/n with 0 <= k < n, got ${shard.index}/${shard.count}`);
  }
  return {
    label: options.input === '-' ? '<stdin>' : options.input,
    workers,
    batch,
    arrival: options.arrival ?? { kind: 'closed' },
    check: options.check ?? DEFAULT_CHECK,
    settings: options.settings ?? { ...DEFAULT_SETTINGS },
    pileup: pileupStepsOn(options.pileup) ? { ...options.pileup } : null,
    grooming: groomingIsOn(options.grooming) ? { ...options.grooming! } : null,
    engine: options.engine ?? 'wasm',
    shard,
    budgetUs,
    budgetNs: budgetUs === null ? Infinity : budgetUs * 1000,
  };
}

/**
 * Refuses up front, in one line, what the workers' engines would refuse (or a missing build),
 * rather than failing every batch or timing some other clusterer.
 */
function refuseUnusableEngine(grid: Grid, settings: ClusterSettings): void {
  const module = loadEngineModule(); // a missing build says so itself
  try {
    new WasmClusterer(grid, settings, { module });
  } catch (error) {
    throw new UsageError(`run: the engine cannot cluster with these settings: ${(error as Error).message}`);
  }
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

/**
 * The input's size for the progress bar's ETA, which compares record offsets with it: only an
 * uncompressed file read to its end has one (gzip offsets count inflated bytes); 0 for gzip,
 * stdin and --events, whose bar shows events and rate only.
 */
function progressBytesTotal(options: RunOptions): number {
  if (options.input === '-') return 0;
  try {
    return !isGzipFile(options.input) && options.maxEvents == null ? statSync(options.input).size : 0;
  } catch {
    return 0;
  }
}

function checkFractionOf(check: CheckOption): number {
  return check.mode === 'all' ? 1 : check.mode === 'none' ? 0 : check.fraction;
}

function workerConfigOf(plan: RunPlan, grid: Grid, encodeJets: boolean, program: ExecWorkerConfig | null): WorkerConfig {
  // the timed pass sends its check sample back; the reference runs after it (check-pass.ts)
  const config: WorkerConfig = { grid, settings: plan.settings, pileup: plan.pileup, grooming: plan.grooming, engine: plan.engine, checkFraction: checkFractionOf(plan.check), checkSeed: plan.check.seed, encodeJets, checkApart: true };
  // a program's jets exist only in its worker: the check runs there, after each answer
  return program ? { ...config, exec: program, checkApart: false } : config;
}

/**
 * Opens the jets file (with its header on the way) and the repro file before the run, so an
 * output that cannot be written costs no run; both are written under temporary names and
 * renamed when complete ('-' is stdout).
 */
async function openOutputs(options: RunOptions, plan: RunPlan, grid: Grid, inputLabel: string) {
  const jetsFile = options.out ? await OutputFile.open(options.out, { force: options.force }) : null;
  const jetsHeaderPending = jetsFile
    ? jetsFile.write(encodeJetsFileHeader(grid, { ...plan.settings, engine: options.program?.label ?? plan.engine, ...(plan.pileup ? { pileup: plan.pileup } : {}), ...(plan.grooming ? { grooming: plan.grooming } : {}) }, { producer: producerName('run'), label: inputLabel }))
    : undefined;
  const repro = options.repro ? await ReproWriter.open(options.repro, { grid, source: plan.label, engine: options.program?.label ?? plan.engine, force: options.force }) : null;
  return { jetsFile, jetsHeaderPending, repro };
}

export async function runEvents(options: RunOptions): Promise<RunSummary> {
  const plan = planRun(options);
  const schedule = new ArrivalSchedule(plan.arrival);
  const source = await openEventSource(options.input, { fileLabel: plan.label, grid: options.grid, maxEventGap: options.maxEventGap });
  // a shard of a plain event file with a record index reads only its own batches
  const input = await shardInput(options, plan, source, schedule.openLoop);
  const grid: Grid = source.header.grid;
  const program = options.program ?? null;
  if (program !== null && (plan.pileup || plan.grooming)) throw new UsageError('run: --engine exec: clusters only; the pileup steps, --trim and --softdrop run on the wasm engine or the reference');
  if (plan.engine === 'wasm' && program === null) refuseUnusableEngine(grid, plan.settings);
  // the pileup settings' limits need the grid; a chain the workers would refuse is refused here
  if (plan.pileup || plan.grooming) makeClusterer(plan.engine, grid, plan.settings, null, plan.pileup, 'run', plan.grooming);
  const bytesTotal = progressBytesTotal(options);
  const config = workerConfigOf(plan, grid, Boolean(options.out), program);
  // an engine program that used up its restarts stops the reading (exec-delivery.ts)
  const engineStop = new AbortController();
  const { jetsFile, jetsHeaderPending, repro } = await openOutputs(options, plan, grid, source.header.label);
  const delivery = new RunDelivery(
    { label: plan.label, openLoop: schedule.openLoop, budgetNs: plan.budgetNs, reproPath: options.repro ?? null, onProblem: options.onProblem, onEvent: options.onEvent, onEngineStopped: () => engineStop.abort() },
    program?.label ?? plan.engine, jetsFile, jetsHeaderPending, repro,
  );

  const pool = new BatchPool({
    workers: plan.workers,
    maxInFlight: options.maxInFlight ?? 2 * plan.workers,
    config,
    workerFile: options.workerFile,
    deliver: (outcome) => delivery.deliver(outcome),
  });
  // threads and engines are made before the clock starts: start-up is not throughput
  await pool.warmUp(plan.workers);
  const feedPlan = { batch: plan.batch, shard: plan.shard, maxEvents: options.maxEvents, signal: options.signal ? AbortSignal.any([options.signal, engineStop.signal]) : engineStop.signal };
  const feed = schedule.openLoop
    ? new OpenLoopFeed({ ...feedPlan, workers: plan.workers, maxRecordBytes: DEFAULT_MAX_RECORD_BYTES }, schedule, pool, delivery)
    : new RecordFeed(feedPlan, pool, delivery);
  const progress = new ProgressBar(options.progress ?? process.stderr, { eventsDone: () => delivery.tally.read, bytesDone: () => delivery.offsetDone }, { bytes: bytesTotal }, Boolean(options.progress));
  let wallSeconds = 0;
  progress.start();
  const machineLoad = new MachineLoadProbe();
  try {
    if (feed instanceof OpenLoopFeed) {
      await feed.feed(input.records);
      wallSeconds = Math.max(0, feed.endNs - feed.startNs) / 1e9;
    } else {
      const startNs = nowNs();
      await feed.feed(input.records);
      await pool.drain();
      // the index counts the records of the whole file; this shard saw only its own
      if (input.recordsInFile !== null && feed.partialReason === null) feed.records = input.recordsInFile;
      wallSeconds = (nowNs() - startNs) / 1e9;
    }
    delivery.tally.recordMachineLoad(machineLoad);
    await delivery.jetsWritten();
  } catch (error) {
    await delivery.abortOutputs();
    throw error;
  } finally {
    progress.stop();
    await pool.close();
  }
  // the reference after the timing, in workers of its own
  try {
    await runCheckPass(delivery.checkSample, { workers: plan.workers, batch: plan.batch, config, workerFile: options.workerFile, signal: options.signal }, delivery);
  } catch (error) {
    await delivery.abortOutputs();
    throw error;
  }
  if (delivery.engineStopped !== null) {
    await delivery.abortOutputs();
    throw new ExecEngineError(delivery.engineStopped);
  }
  await delivery.closeRepro();
  delivery.tally.bytesRead = feed.lastOffset;
  await delivery.closeJets();
  return summarize(options, plan, delivery, feed, { grid, inputLabel: source.header.label, wallSeconds });
}

/** The run's summary, with the input error that cut it short (if any) kept off the JSON. */
function summarize(options: RunOptions, plan: RunPlan, delivery: RunDelivery, feed: RecordFeed | OpenLoopFeed, run: { grid: Grid; inputLabel: string; wallSeconds: number }): RunSummary {
  const { arrival, check, shard } = plan;
  const configuration: RunConfiguration = {
    file: plan.label,
    engine: delivery.engineName,
    grid: { ...run.grid },
    settings: { ...plan.settings },
    ...(plan.pileup ? { pileup: plan.pileup } : {}),
    ...(plan.grooming ? { grooming: plan.grooming } : {}),
    workers: plan.workers,
    batch: plan.batch,
    arrival: {
      mode: arrival.kind,
      rateHz: arrival.kind === 'closed' ? null : arrival.rateHz,
      seed: arrival.kind === 'poisson' ? arrival.seed : null,
    },
    budgetUs: plan.budgetUs,
    check: { mode: check.mode, fraction: checkFractionOf(check), seed: check.seed },
    shard,
    maxEvents: options.maxEvents ?? null,
    out: options.out ?? null,
    // what tells one input from another when shards are merged (paths differ between nodes)
    input: { label: run.inputLabel, records: feed.partialReason === null ? feed.records : null },
  };
  const summary = renderSummary(delivery.tally, {
    configuration,
    shards: [shard],
    machine: describeMachine(),
    partial: feed.partialReason !== null,
    partialReason: feed.partialReason,
    wallSeconds: run.wallSeconds,
  });
  if (feed.inputError) Object.defineProperty(summary, 'inputError', { value: feed.inputError, enumerable: false });
  return summary;
}

/** The input error that cut a run short, if any (kept off the JSON). */
export function inputErrorOf(summary: RunSummary): InputError | null {
  return (summary as unknown as { inputError?: InputError }).inputError ?? null;
}
