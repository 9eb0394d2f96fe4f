// What the report reads: run summaries (`jetlag run --json`, `jetlag merge`) and compare
// documents (`jetlag compare --json`), brought into one shape per kind. The summary's layout
// grows (version 2 renamed cluster to service and multiplicity to scaling, and added wait,
// return, the harness's dispatch lateness, saturation and towers per event); each figure is
// taken where the document has it and left out where it has not, so the report draws what is
// there and skips what is absent.

import { InputError } from '../errors.js';
import type { LatencyStats } from '../measure/latency.js';
import { isEncoded, plainHistogram, type PlainHistogram } from '../measure/plain-histogram.js';
import type { ValidationReport } from '../validate/validation-report.js';
import type { TurnOnCurve } from '../validate/turn-on.js';

/** One latency figure of a run: its statistics and, when the histogram is there, its bins. */
export interface LatencySeries {
  stats: LatencyStats;
  plain: PlainHistogram | null;
}

export interface ScalingView {
  alpha: number | null;
  alphaError: number | null;
  reason: string | null;
  nMin: number | null;
  nMax: number | null;
  bins: { nLow: number; nHigh: number; events: number; p50_us: number; mean_us: number }[];
}

/** A per-event point for the scatter of service time against towers (thinned). */
export interface EventPoint {
  event: number;
  towers: number;
  serviceUs: number;
}

/* eslint-disable @typescript-eslint/no-explicit-any */
type Json = any;

export interface RunView {
  kind: 'run';
  /** a short name of the run for legends and column heads (from the input: escape it) */
  name: string;
  /** where the summary came from: its file, or 'this run' */
  source: string;
  summary: Json;
  configuration: Json;
  openLoop: boolean;
  events: { read: number; ok: number; invalid: number; failed: number };
  service: LatencySeries | null;
  wait: LatencySeries | null;
  returnTrip: LatencySeries | null;
  endToEnd: LatencySeries | null;
  dispatchLateness: LatencySeries | null;
  /** open loop: end-to-end minus service per event; of the events no thread of which waited for a CPU; that wait */
  overhead: LatencySeries | null;
  overheadUndelayed: LatencySeries | null;
  cpuWait: LatencySeries | null;
  stages: Record<string, LatencyStats>;
  /** the pileup chain's stages that ran, inside the cluster stage (spec part two); {} when none */
  pileupStages: Record<string, LatencyStats>;
  /** trimming and soft drop per event, inside the cluster stage (spec section 12); null when off */
  grooming: LatencyStats | null;
  scaling: ScalingView | null;
  /** thinned per-event points, when the run was seen event by event (jetlag run --report, --per-event) */
  points: EventPoint[] | null;
  /** the event with the longest service time, when known */
  slowestEvent: number | null;
}

export interface CompareView {
  kind: 'compare';
  name: string;
  source: string;
  document: ValidationReport & {
    files?: { events?: string; candidate?: string };
    candidate?: { format?: string; engine?: string | null; producer?: string | null };
    settings?: Json;
    grid?: Json;
    require?: number;
    passed?: boolean;
    inputError?: string | null;
    referenceJetsBy?: string;
    turnOn?: TurnOnCurve[];
  };
}

export type ReportInput = RunView | CompareView;

function isStats(value: unknown): value is LatencyStats {
  return value !== null && typeof value === 'object' && typeof (value as LatencyStats).count === 'number';
}

/** A latency figure by its name in `latency` (or `harness`) and in `histograms`, with older names as fallbacks. */
function seriesOf(summary: Json, statsPaths: string[][], histogramNames: string[]): LatencySeries | null {
  let stats: LatencyStats | null = null;
  for (const path of statsPaths) {
    let value: Json = summary;
    for (const key of path) value = value?.[key];
    if (isStats(value)) { stats = value; break; }
  }
  if (stats === null || stats.count === 0) return null;
  let plain: PlainHistogram | null = null;
  for (const name of histogramNames) {
    const table = summary.plainHistograms?.[name];
    if (table && Array.isArray(table.bins)) { plain = table; break; }
    const encoded = summary.histograms?.[name];
    if (isEncoded(encoded)) {
      try { plain = plainHistogram(encoded); } catch { plain = null; }
      break;
    }
  }
  return { stats, plain };
}

function scalingOf(summary: Json): ScalingView | null {
  const scaling = summary.scaling;
  if (scaling && Array.isArray(scaling.bins)) {
    return {
      alpha: typeof scaling.alpha === 'number' ? scaling.alpha : null,
      alphaError: typeof scaling.alphaError === 'number' ? scaling.alphaError : null,
      reason: typeof scaling.reason === 'string' ? scaling.reason : null,
      nMin: scaling.nMin ?? null,
      nMax: scaling.nMax ?? null,
      bins: scaling.bins,
    };
  }
  const multiplicity = summary.multiplicity; // version 1
  if (multiplicity && Array.isArray(multiplicity.bins)) {
    const bins = multiplicity.bins.map((bin: Json) => ({ nLow: bin.towersMin, nHigh: bin.towersMax, events: bin.count, p50_us: bin.p50_us, mean_us: bin.mean_us }));
    return {
      alpha: typeof multiplicity.alpha === 'number' ? multiplicity.alpha : null,
      alphaError: null,
      reason: null,
      nMin: bins.length > 0 ? bins[0].nLow : null,
      nMax: bins.length > 0 ? bins[bins.length - 1].nHigh : null,
      bins,
    };
  }
  return null;
}

function baseName(path: string): string {
  const parts = String(path).split(/[\\/]/);
  return parts[parts.length - 1] || String(path);
}

/** A run summary as the report reads it. */
export function runView(summary: Json, source: string, extra: { points?: EventPoint[] | null; slowestEvent?: number | null } = {}): RunView {
  const configuration = summary.configuration ?? {};
  const openLoop = configuration.arrival?.mode !== undefined && configuration.arrival.mode !== 'closed';
  const workers = configuration.workers !== undefined ? `, ${configuration.workers} worker${configuration.workers === 1 ? '' : 's'}` : '';
  const loop = openLoop ? `, ${configuration.arrival.mode} ${configuration.arrival.rateHz} Hz` : '';
  return {
    kind: 'run',
    name: `${configuration.engine ?? 'run'}${workers}${loop}, ${baseName(configuration.file ?? source)}`,
    source,
    summary,
    configuration,
    openLoop,
    events: summary.events ?? { read: 0, ok: 0, invalid: 0, failed: 0 },
    service: seriesOf(summary, [['latency', 'service'], ['latency', 'cluster']], ['service', 'cluster']),
    wait: openLoop ? seriesOf(summary, [['latency', 'wait']], ['wait']) : null,
    returnTrip: openLoop ? seriesOf(summary, [['latency', 'return']], ['return']) : null,
    endToEnd: openLoop ? seriesOf(summary, [['latency', 'endToEnd']], ['endToEnd']) : null,
    dispatchLateness: openLoop ? seriesOf(summary, [['harness', 'dispatchLateness'], ['latency', 'dispatchLag']], ['dispatchLateness', 'dispatchLag']) : null,
    overhead: openLoop ? seriesOf(summary, [['harness', 'overhead']], ['overhead']) : null,
    overheadUndelayed: openLoop ? seriesOf(summary, [['harness', 'cpuWait', 'perEvent', 'overheadUndelayed']], ['overheadUndelayed']) : null,
    cpuWait: openLoop ? seriesOf(summary, [['harness', 'cpuWait', 'perEvent', 'wait']], ['cpuWait']) : null,
    stages: summary.latency?.stages ?? {},
    pileupStages: summary.latency?.pileupStages ?? {},
    grooming: isStats(summary.latency?.grooming) ? summary.latency.grooming : null,
    scaling: scalingOf(summary),
    points: extra.points ?? null,
    slowestEvent: extra.slowestEvent ?? (typeof summary.slowestEvent?.event === 'number' ? summary.slowestEvent.event : null),
  };
}

export function compareView(document: Json, source: string): CompareView {
  const candidate = document.files?.candidate ?? 'candidate';
  return { kind: 'compare', name: `${baseName(candidate)} against the reference`, source, document };
}

/** A parsed JSON document of either kind; anything else is named as an input error. */
export function viewOfDocument(document: Json, source: string): ReportInput {
  if (document && document.format === 'jetlag-run-summary') return runView(document, source);
  if (document && document.command === 'compare' && document.events && document.jets) return compareView(document, source);
  throw new InputError(source, 'neither a run summary (jetlag run --json) nor a compare report (jetlag compare --json)');
}

/** Names that repeat get a number, so every run has its own legend entry. */
export function distinctNames<T extends { name: string }>(inputs: T[]): T[] {
  const seen = new Map<string, number>();
  for (const input of inputs) seen.set(input.name, (seen.get(input.name) ?? 0) + 1);
  const numbered = new Map<string, number>();
  return inputs.map((input) => {
    if (seen.get(input.name)! < 2) return input;
    const k = (numbered.get(input.name) ?? 0) + 1;
    numbered.set(input.name, k);
    return { ...input, name: `${input.name} #${k}` };
  });
}
