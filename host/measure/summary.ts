// The tally of a run and its machine-readable summary (--json). The host folds every batch
// result into one RunTally; the summary is rendered from the tally, and a merge of shard
// summaries decodes their tallies, adds them and renders again through the same code, so
// merged counts and percentiles are exactly those of one run over the same events.
//
// Invariant, checked on every render: events.ok + events.invalid + events.failed = events.read.

import os from 'node:os';
import { LatencyRecorder, type EncodedLatency, type LatencyStats } from './latency.js';
import type { TowerCounts } from '../types.js';
import type { JetDifference } from '../validate/bit-exact.js';

export const STAGES = ['decode', 'bin', 'cluster', 'check', 'encode'] as const;
export type Stage = (typeof STAGES)[number];

/** Invalid events and failed batches are listed up to this many each; the counts stay exact. */
export const LISTED_MAX = 1000;
/** Check differences kept for the summary. */
export const DIFFERENCES_MAX = 20;

export interface InvalidEvent {
  /** null when the record was too broken to say */
  event: number | null;
  /** ordinal of the record among the file's events (0 = the first event record) */
  record: number;
  /** byte offset of the record's start (uncompressed) */
  offset: number;
  reason: string;
}

export interface FailedBatch {
  /** ordinal of the batch's first record among the file's events */
  firstRecord: number;
  events: number;
  /** byte offset of the batch's first record */
  offset: number;
  reason: string;
}

export interface CheckedDifference extends JetDifference {
  event: number;
}

/**
 * Lower edges of the multiplicity bins: four per doubling of N (ceil(2^(j/4)), repeats
 * dropped), so that even a file whose events all have similar N spans a few bins for the fit.
 * Bin 0 holds N = 0; bin b >= 1 holds MULTIPLICITY_EDGES[b-1] <= N < MULTIPLICITY_EDGES[b].
 */
export const MULTIPLICITY_EDGES: readonly number[] = (() => {
  const edges: number[] = [];
  for (let j = 0; j <= 4 * 23; j++) {
    const edge = Math.ceil(2 ** (j / 4) - 1e-9);
    if (edges[edges.length - 1] !== edge) edges.push(edge);
  }
  return edges;
})();

/** Per-event clustering time against tower multiplicity N (towers that entered clustering). */
export class MultiplicityBins {
  readonly recorders: (LatencyRecorder | undefined)[] = [];
  readonly sumTowers: number[] = [];

  static binOf(towers: number): number {
    if (towers <= 0) return 0;
    // the last edge not above N, by bisection
    let lo = 0;
    let hi = MULTIPLICITY_EDGES.length - 1;
    while (lo < hi) {
      const mid = (lo + hi + 1) >> 1;
      if (MULTIPLICITY_EDGES[mid] <= towers) lo = mid; else hi = mid - 1;
    }
    return lo + 1;
  }

  record(towers: number, clusterNs: number): void {
    const bin = MultiplicityBins.binOf(towers);
    let recorder = this.recorders[bin];
    if (!recorder) {
      recorder = this.recorders[bin] = new LatencyRecorder();
      this.sumTowers[bin] = 0;
    }
    recorder.recordNs(clusterNs);
    this.sumTowers[bin] += towers;
  }

  merge(other: MultiplicityBins): void {
    other.recorders.forEach((recorder, bin) => {
      if (!recorder) return;
      if (!this.recorders[bin]) {
        this.recorders[bin] = new LatencyRecorder();
        this.sumTowers[bin] = 0;
      }
      this.recorders[bin]!.merge(recorder);
      this.sumTowers[bin] += other.sumTowers[bin];
    });
  }
}

export interface MultiplicityBin {
  towersMin: number;
  towersMax: number;
  count: number;
  meanTowers: number;
  mean_us: number;
  p50_us: number;
  p99_us: number;
}

export interface MultiplicityFit {
  /** fitted exponent of time ∝ N^alpha; null with fewer than two usable bins */
  alpha: number | null;
  /** bins with at least this many events and mean N >= FIT_MIN_TOWERS enter the fit */
  binsUsed: number;
}

const FIT_MIN_EVENTS = 3;
const FIT_MIN_TOWERS = 8;

/**
 * Least-squares line through (ln mean N, ln median time) of the usable bins. The median, not
 * the mean: a worker descheduled by the system adds a tail that would tilt the line.
 */
export function fitMultiplicity(bins: readonly MultiplicityBin[]): MultiplicityFit {
  const xs: number[] = [];
  const ys: number[] = [];
  for (const bin of bins) {
    if (bin.count < FIT_MIN_EVENTS || bin.meanTowers < FIT_MIN_TOWERS || !(bin.p50_us > 0)) continue;
    xs.push(Math.log(bin.meanTowers));
    ys.push(Math.log(bin.p50_us));
  }
  if (xs.length < 2) return { alpha: null, binsUsed: xs.length };
  const n = xs.length;
  const meanX = xs.reduce((a, b) => a + b, 0) / n;
  const meanY = ys.reduce((a, b) => a + b, 0) / n;
  let sxy = 0;
  let sxx = 0;
  for (let k = 0; k < n; k++) {
    sxy += (xs[k] - meanX) * (ys[k] - meanY);
    sxx += (xs[k] - meanX) * (xs[k] - meanX);
  }
  return { alpha: sxx > 0 ? sxy / sxx : null, binsUsed: n };
}

export class RunTally {
  read = 0;
  ok = 0;
  invalid = 0;
  failed = 0;
  bytesRead = 0;
  jets = 0;
  readonly invalidEvents: InvalidEvent[] = [];
  readonly failedBatches: FailedBatch[] = [];
  readonly towers: TowerCounts = { offered: 0, belowThreshold: 0, outsideAcceptance: 0, clustered: 0 };
  readonly check = { checked: 0, agreeing: 0, disagreeing: 0, differences: [] as CheckedDifference[] };
  /** per-event clustering time inside the worker */
  readonly cluster = new LatencyRecorder();
  /** per event, scheduled (open loop) or dispatch (closed loop) time to its result back on the host */
  readonly endToEnd = new LatencyRecorder();
  /** open loop: how late the host handed each event to the pool after its scheduled arrival */
  readonly dispatchLag = new LatencyRecorder();
  readonly stages: Record<Stage, LatencyRecorder> = {
    decode: new LatencyRecorder(),
    bin: new LatencyRecorder(),
    cluster: new LatencyRecorder(),
    check: new LatencyRecorder(),
    encode: new LatencyRecorder(),
  };
  readonly multiplicity = new MultiplicityBins();
  /**
   * events over the budget (exact count, not from buckets): open loop, their end-to-end latency
   * from the scheduled arrival; closed loop (no arrivals), their own time in the worker
   */
  overBudget = 0;

  addInvalid(entry: InvalidEvent): void {
    this.invalid++;
    if (this.invalidEvents.length < LISTED_MAX) this.invalidEvents.push(entry);
  }

  addFailedBatch(entry: FailedBatch): void {
    this.failed += entry.events;
    if (this.failedBatches.length < LISTED_MAX) this.failedBatches.push(entry);
  }

  addDifference(entry: CheckedDifference): void {
    if (this.check.differences.length < DIFFERENCES_MAX) this.check.differences.push(entry);
  }

  merge(other: RunTally): void {
    this.read += other.read;
    this.ok += other.ok;
    this.invalid += other.invalid;
    this.failed += other.failed;
    this.bytesRead += other.bytesRead;
    this.jets += other.jets;
    for (const entry of other.invalidEvents) if (this.invalidEvents.length < LISTED_MAX) this.invalidEvents.push(entry);
    this.invalidEvents.sort((a, b) => a.record - b.record);
    for (const entry of other.failedBatches) if (this.failedBatches.length < LISTED_MAX) this.failedBatches.push(entry);
    this.failedBatches.sort((a, b) => a.firstRecord - b.firstRecord);
    this.towers.offered += other.towers.offered;
    this.towers.belowThreshold += other.towers.belowThreshold;
    this.towers.outsideAcceptance += other.towers.outsideAcceptance;
    this.towers.clustered += other.towers.clustered;
    this.check.checked += other.check.checked;
    this.check.agreeing += other.check.agreeing;
    this.check.disagreeing += other.check.disagreeing;
    for (const entry of other.check.differences) this.addDifference(entry);
    this.check.differences.sort((a, b) => a.event - b.event);
    this.cluster.merge(other.cluster);
    this.endToEnd.merge(other.endToEnd);
    this.dispatchLag.merge(other.dispatchLag);
    for (const stage of STAGES) this.stages[stage].merge(other.stages[stage]);
    this.multiplicity.merge(other.multiplicity);
    this.overBudget += other.overBudget;
  }
}

export interface MachineInfo {
  cpuModel: string;
  cores: number;
  node: string;
  platform: string;
  arch: string;
}

export function describeMachine(): MachineInfo {
  const cpus = os.cpus();
  return {
    cpuModel: cpus[0]?.model?.trim() ?? 'unknown',
    cores: typeof os.availableParallelism === 'function' ? os.availableParallelism() : cpus.length,
    node: process.version,
    platform: process.platform,
    arch: process.arch,
  };
}

/** Everything that decides what a run computes and how it is timed. */
export interface RunConfiguration {
  file: string;
  engine: string;
  grid: { etaMin: number; etaMax: number; etaBins: number; phiBins: number };
  settings: { p: number; radius: number; ptMin: number; threshold: number; recombination: string };
  workers: number;
  batch: number;
  arrival: { mode: 'closed' | 'fixed' | 'poisson'; rateHz: number | null; seed: number | null };
  budgetUs: number | null;
  check: { mode: 'all' | 'fraction' | 'none'; fraction: number; seed: number };
  shard: { index: number; count: number };
  maxEvents: number | null;
  out: string | null;
  /** the input's header label, and its number of event records when read to its end */
  input: { label: string; records: number | null };
}

export interface RunSummary {
  format: 'jetlag-run-summary';
  version: 1;
  partial: boolean;
  partialReason: string | null;
  configuration: RunConfiguration;
  /** shards this summary covers: one for a run, several after a merge */
  shards: { index: number; count: number }[];
  machine: MachineInfo;
  machines?: MachineInfo[];
  events: { read: number; ok: number; invalid: number; failed: number };
  invalidEvents: InvalidEvent[];
  failedBatches: FailedBatch[];
  towers: TowerCounts;
  jets: number;
  check: { checked: number; agreeing: number; disagreeing: number; differences: CheckedDifference[] };
  latency: {
    cluster: LatencyStats;
    endToEnd: LatencyStats;
    /** open loop: scheduled arrival to hand-over to the pool (part of endToEnd): waiting for room in the pool, and timer lateness */
    dispatchLag: LatencyStats;
    stages: Record<Stage, LatencyStats>;
  };
  /** measuredOn: 'end-to-end' (open loop) or 'worker time' (closed loop: decode to encode of the event itself, the reference check left out) */
  budget: { budgetUs: number; measuredOn: 'end-to-end' | 'worker time'; over: number; fractionOver: number } | null;
  /** events read / wall time from the first dispatch to the last result; bytesRead: uncompressed offset of the last record read */
  throughput: { eventsPerSecond: number; wallSeconds: number; bytesRead: number };
  multiplicity: { bins: MultiplicityBin[]; alpha: number | null; binsUsed: number };
  histograms: {
    cluster: EncodedLatency;
    endToEnd: EncodedLatency;
    dispatchLag: EncodedLatency;
    stages: Record<Stage, EncodedLatency>;
    multiplicity: { bin: number; sumTowers: number; histogram: EncodedLatency }[];
  };
  findRate?: FindRateResult;
  scanWorkers?: ScanWorkersResult;
}

export interface FindRateResult {
  budgetUs: number;
  /** highest rate tried whose end-to-end p99 stayed within the budget; null if none did */
  rateHz: number | null;
  trials: { rateHz: number; p99_us: number | null; withinBudget: boolean; events: number }[];
}

export interface ScanWorkersResult {
  points: { workers: number; eventsPerSecond: number; speedup: number; cluster_p50_us: number | null; endToEnd_p99_us: number | null }[];
}

export interface RenderContext {
  configuration: RunConfiguration;
  shards: { index: number; count: number }[];
  machine: MachineInfo;
  machines?: MachineInfo[];
  partial: boolean;
  partialReason: string | null;
  wallSeconds: number;
  /** when given (a merge), used instead of events / wallSeconds */
  eventsPerSecond?: number;
}

function bucketRange(bin: number): [number, number] {
  if (bin === 0) return [0, 0];
  return [MULTIPLICITY_EDGES[bin - 1], (MULTIPLICITY_EDGES[bin] ?? Infinity) - 1];
}

export function multiplicityTable(bins: MultiplicityBins): MultiplicityBin[] {
  const table: MultiplicityBin[] = [];
  bins.recorders.forEach((recorder, bin) => {
    if (!recorder || recorder.count === 0) return;
    const [towersMin, towersMax] = bucketRange(bin);
    table.push({
      towersMin,
      towersMax,
      count: recorder.count,
      meanTowers: bins.sumTowers[bin] / recorder.count,
      mean_us: recorder.meanNs() / 1000,
      p50_us: recorder.percentileNs(50) / 1000,
      p99_us: recorder.percentileNs(99) / 1000,
    });
  });
  return table;
}

export function renderSummary(tally: RunTally, context: RenderContext): RunSummary {
  const events = { read: tally.read, ok: tally.ok, invalid: tally.invalid, failed: tally.failed };
  if (events.ok + events.invalid + events.failed !== events.read) {
    throw new Error(`event counts do not add up: ok ${events.ok} + invalid ${events.invalid} + failed ${events.failed} != read ${events.read}`);
  }
  const stagesStats = {} as Record<Stage, LatencyStats>;
  const stagesEncoded = {} as Record<Stage, EncodedLatency>;
  for (const stage of STAGES) {
    stagesStats[stage] = tally.stages[stage].stats();
    stagesEncoded[stage] = tally.stages[stage].encode();
  }
  const bins = multiplicityTable(tally.multiplicity);
  const fit = fitMultiplicity(bins);
  const budgetUs = context.configuration.budgetUs;
  const timed = tally.endToEnd.count;
  const wallSeconds = context.wallSeconds;
  return {
    format: 'jetlag-run-summary',
    version: 1,
    partial: context.partial,
    partialReason: context.partialReason,
    configuration: context.configuration,
    shards: context.shards,
    machine: context.machine,
    ...(context.machines ? { machines: context.machines } : {}),
    events,
    invalidEvents: tally.invalidEvents,
    failedBatches: tally.failedBatches,
    towers: { ...tally.towers },
    jets: tally.jets,
    check: { ...tally.check },
    latency: { cluster: tally.cluster.stats(), endToEnd: tally.endToEnd.stats(), dispatchLag: tally.dispatchLag.stats(), stages: stagesStats },
    budget: budgetUs === null ? null : {
      budgetUs,
      measuredOn: context.configuration.arrival.mode === 'closed' ? 'worker time' : 'end-to-end',
      over: tally.overBudget,
      fractionOver: timed === 0 ? 0 : tally.overBudget / timed,
    },
    throughput: {
      eventsPerSecond: context.eventsPerSecond ?? (wallSeconds > 0 ? events.read / wallSeconds : 0),
      wallSeconds,
      bytesRead: tally.bytesRead,
    },
    multiplicity: { bins, alpha: fit.alpha, binsUsed: fit.binsUsed },
    histograms: {
      cluster: tally.cluster.encode(),
      endToEnd: tally.endToEnd.encode(),
      dispatchLag: tally.dispatchLag.encode(),
      stages: stagesEncoded,
      multiplicity: tally.multiplicity.recorders.flatMap((recorder, bin) =>
        recorder ? [{ bin, sumTowers: tally.multiplicity.sumTowers[bin], histogram: recorder.encode() }] : []),
    },
  };
}

/** Rebuilds the tally of a summary (histograms decoded, counts and lists copied). */
export function tallyFromSummary(summary: RunSummary, where = 'summary'): RunTally {
  const tally = new RunTally();
  tally.read = summary.events.read;
  tally.ok = summary.events.ok;
  tally.invalid = summary.events.invalid;
  tally.failed = summary.events.failed;
  tally.bytesRead = summary.throughput.bytesRead;
  tally.jets = summary.jets;
  tally.invalidEvents.push(...summary.invalidEvents);
  tally.failedBatches.push(...summary.failedBatches);
  Object.assign(tally.towers, summary.towers);
  tally.check.checked = summary.check.checked;
  tally.check.agreeing = summary.check.agreeing;
  tally.check.disagreeing = summary.check.disagreeing;
  tally.check.differences.push(...summary.check.differences);
  tally.cluster.merge(LatencyRecorder.decode(summary.histograms.cluster, `${where}: histograms.cluster`));
  tally.endToEnd.merge(LatencyRecorder.decode(summary.histograms.endToEnd, `${where}: histograms.endToEnd`));
  tally.dispatchLag.merge(LatencyRecorder.decode(summary.histograms.dispatchLag, `${where}: histograms.dispatchLag`));
  for (const stage of STAGES) {
    tally.stages[stage].merge(LatencyRecorder.decode(summary.histograms.stages[stage], `${where}: histograms.stages.${stage}`));
  }
  for (const entry of summary.histograms.multiplicity) {
    const recorder = LatencyRecorder.decode(entry.histogram, `${where}: histograms.multiplicity[${entry.bin}]`);
    tally.multiplicity.recorders[entry.bin] = recorder;
    tally.multiplicity.sumTowers[entry.bin] = entry.sumTowers;
  }
  tally.overBudget = summary.budget?.over ?? 0;
  return tally;
}

/** What must agree between summaries for their sum to mean anything. */
function mergeKey(configuration: RunConfiguration): string {
  const { grid, settings, batch, arrival, budgetUs, check, engine, maxEvents } = configuration;
  return JSON.stringify({ grid, settings, batch, arrival, budgetUs, check, engine, maxEvents, shardCount: configuration.shard.count, input: configuration.input?.label });
}

/**
 * Adds shard summaries into one. They must share grid, settings, batch size, arrivals, budget,
 * check mode, engine and shard count, and cover distinct shards. Merged throughput is the sum
 * of the shards' events/s (shards of a job array run side by side); wall time is the longest.
 */
export function mergeSummaries(summaries: readonly { name: string; summary: RunSummary }[]): RunSummary {
  if (summaries.length === 0) throw new Error('merge: no summaries given');
  for (const { name, summary } of summaries) {
    if (summary?.format !== 'jetlag-run-summary' || summary.version !== 1 || typeof summary.configuration !== 'object') {
      throw new Error(`${name}: not a jetlag run summary (format ${JSON.stringify(summary?.format)})`);
    }
  }
  const first = summaries[0];
  const key = mergeKey(first.summary.configuration);
  let records: number | null = null;
  const seen = new Map<number, string>();
  const tally = new RunTally();
  let eventsPerSecond = 0;
  let wallSeconds = 0;
  let partial = false;
  const reasons: string[] = [];
  const machines: MachineInfo[] = [];
  for (const { name, summary } of summaries) {
    if (summary?.format !== 'jetlag-run-summary' || summary.version !== 1) {
      throw new Error(`${name}: not a jetlag run summary (format ${JSON.stringify(summary?.format)})`);
    }
    if (mergeKey(summary.configuration) !== key) {
      throw new Error(`${name}: configuration differs from ${first.name} (input label, grid, settings, batch, arrivals, budget, check, engine, --events and shard count must agree)`);
    }
    const own = summary.configuration.input?.records ?? null;
    if (own !== null && records !== null && own !== records) {
      throw new Error(`${name}: its input has ${own} event records, the input of an earlier summary ${records}: not the same file`);
    }
    records ??= own;
    for (const shard of summary.shards) {
      const other = seen.get(shard.index);
      if (other !== undefined) throw new Error(`${name}: shard ${shard.index}/${shard.count} is already in ${other}`);
      seen.set(shard.index, name);
    }
    tally.merge(tallyFromSummary(summary, name));
    eventsPerSecond += summary.throughput.eventsPerSecond;
    wallSeconds = Math.max(wallSeconds, summary.throughput.wallSeconds);
    if (summary.partial) {
      partial = true;
      reasons.push(`${name}: ${summary.partialReason ?? 'partial'}`);
    }
    for (const machine of summary.machines ?? [summary.machine]) {
      if (!machines.some((m) => JSON.stringify(m) === JSON.stringify(machine))) machines.push(machine);
    }
  }
  const shardCount = first.summary.configuration.shard.count;
  const shards = [...seen.keys()].sort((a, b) => a - b).map((index) => ({ index, count: shardCount }));
  if (shards.length < shardCount) {
    const missing = Array.from({ length: shardCount }, (_, k) => k).filter((k) => !seen.has(k));
    partial = true;
    reasons.push(`shards ${missing.join(', ')} of ${shardCount} are not in the inputs`);
  }
  return renderSummary(tally, {
    configuration: { ...first.summary.configuration, file: summaries.map((s) => s.summary.configuration.file).filter((f, k, all) => all.indexOf(f) === k).join(',') },
    shards,
    machine: machines[0],
    machines: machines.length > 1 ? machines : undefined,
    partial,
    partialReason: partial ? reasons.join('; ') : null,
    wallSeconds,
    eventsPerSecond,
  });
}
