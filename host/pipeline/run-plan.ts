// A run's options, their defaults, and the plan made of them (run.ts has the steps of a run).

import { pileupStepsOn } from '../clustering/pileup/settings.js';
import { groomingIsOn } from '../clustering/grooming/settings.js';
import type { EngineName } from '../clustering/clusterers.js';
import type { InflateLimits } from '../input/input-chunks.js';
import type { ArrivalMode } from './arrivals.js';
import type { EventObserver } from './run-delivery.js';
import type { WorkerConfig } from './worker-contract.js';
import type { ExecWorkerConfig } from './exec-run-contract.js';
import { describeMachine } from '../measure/summary.js';
import { DEFAULT_SETTINGS, type ClusterSettings, type Grid, type GroomingSettings, type PileupSettings } from '../types.js';

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
  /** caps on inflating gzip input (input-chunks.ts) */
  inflate?: InflateLimits;
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
  /**
   * open loop: read each event's wait for a CPU on its threads (thread-cpu-wait.ts; two reads
   * of a few µs each per event on each side, so off by default; the run's totals are always read)
   */
  cpuWaitPerEvent?: boolean;
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
export interface RunPlan {
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

export function planRun(options: RunOptions): RunPlan {
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

export function checkFractionOf(check: CheckOption): number {
  return check.mode === 'all' ? 1 : check.mode === 'none' ? 0 : check.fraction;
}
