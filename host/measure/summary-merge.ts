// Shard merge: summaries of sharded runs decode back into tallies, add, and render again through
// the same code as one run, so merged counts and percentiles are exactly those of one run over
// the same events.

import { readFileSync } from 'node:fs';
import { InputError } from '../errors.js';
import { LatencyRecorder } from './latency.js';
import { shardBusyReasons } from './machine-load.js';
import { restoreHarnessFigures } from './harness-figures.js';
import { toleranceFiguresOf } from './program-figures.js';
import { PILEUP_STAGES, RunTally, STAGES, type PileupStage } from './run-tally.js';
import { mergedSaturation, readSaturation, type Saturation } from './saturation-figures.js';
import { MERGE_READS_VERSIONS, renderSummary, SUMMARY_VERSION, type MachineInfo, type RunConfiguration, type RunSummary } from './summary.js';

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
  const histograms = summary.histograms;
  tally.service.merge(LatencyRecorder.decode(histograms.service, `${where}: histograms.service`));
  tally.wait.merge(LatencyRecorder.decode(histograms.wait, `${where}: histograms.wait`));
  tally.returnTrip.merge(LatencyRecorder.decode(histograms.return, `${where}: histograms.return`));
  tally.endToEnd.merge(LatencyRecorder.decode(histograms.endToEnd, `${where}: histograms.endToEnd`));
  tally.dispatchLateness.merge(LatencyRecorder.decode(histograms.dispatchLateness, `${where}: histograms.dispatchLateness`));
  restoreHarnessFigures(tally, summary.harness, histograms, summary.configuration.arrival.mode !== 'closed', where);
  tally.towersPerEvent.merge(LatencyRecorder.decode(histograms.towersPerEvent, `${where}: histograms.towersPerEvent`));
  for (const stage of STAGES) {
    tally.stages[stage].merge(LatencyRecorder.decode(summary.histograms.stages[stage], `${where}: histograms.stages.${stage}`));
  }
  for (const [stage, encoded] of Object.entries(summary.histograms.pileupStages ?? {})) {
    if (!(PILEUP_STAGES as readonly string[]).includes(stage)) continue; // a stage of a later version
    tally.pileupStages[stage as PileupStage].merge(LatencyRecorder.decode(encoded!, `${where}: histograms.pileupStages.${stage}`));
  }
  // an engine program's run (`--engine exec:`)
  if (summary.histograms.roundTrip) tally.roundTrip.merge(LatencyRecorder.decode(summary.histograms.roundTrip, `${where}: histograms.roundTrip`));
  if (summary.histograms.pipe) tally.pipe.merge(LatencyRecorder.decode(summary.histograms.pipe, `${where}: histograms.pipe`));
  tally.failedEvents.push(...(summary.failedEvents ?? []));
  tally.engineRestarts = summary.engineRestarts ?? 0;
  if (summary.check.tolerance) tally.tolerance = toleranceFiguresOf(summary.check.tolerance);
  if (summary.histograms.grooming) tally.grooming.merge(LatencyRecorder.decode(summary.histograms.grooming, `${where}: histograms.grooming`));
  for (const entry of summary.histograms.multiplicity) {
    const recorder = LatencyRecorder.decode(entry.histogram, `${where}: histograms.multiplicity[${entry.bin}]`);
    tally.multiplicity.recorders[entry.bin] = recorder;
    tally.multiplicity.sumTowers[entry.bin] = entry.sumTowers;
  }
  tally.overBudget = summary.budget?.over ?? 0;
  tally.saturation = summary.saturation ? readSaturation(summary.saturation) : null;
  tally.machineLoad = summary.machineLoad ? { ...summary.machineLoad } : null;
  return tally;
}

/** What must agree between summaries for their sum to mean anything, named as the reader knows it. */
function mergeFields(configuration: RunConfiguration): Record<string, unknown> {
  const { grid, settings, batch, arrival, budgetUs, check, engine, maxEvents } = configuration;
  return {
    'input label': configuration.input?.label, grid, settings, pileup: configuration.pileup ?? null, grooming: configuration.grooming ?? null,
    batch, arrival, budgetUs, check, engine, '--events': maxEvents, 'shard count': configuration.shard.count, '--program-cpu': configuration.programCpu ?? 'any',
    // more events in flight time each round trip from another start (exec-process.ts)
    '--engine-in-flight': configuration.engineInFlight ?? 1,
  };
}

function mergeKey(configuration: RunConfiguration): string {
  return JSON.stringify(mergeFields(configuration));
}

/** The first field (one level into objects: settings.radius) on which two configurations differ, with both values. */
function firstDifference(a: RunConfiguration, b: RunConfiguration): string {
  const left = mergeFields(a);
  const right = mergeFields(b);
  for (const field of Object.keys(left)) {
    const x = left[field];
    const y = right[field];
    if (JSON.stringify(x) === JSON.stringify(y)) continue;
    if (x !== null && y !== null && typeof x === 'object' && typeof y === 'object') {
      const xs = x as Record<string, unknown>;
      const ys = y as Record<string, unknown>;
      for (const key of new Set([...Object.keys(xs), ...Object.keys(ys)])) {
        if (JSON.stringify(xs[key]) !== JSON.stringify(ys[key])) return `${field}.${key} is ${JSON.stringify(ys[key]) ?? 'absent'}, there ${JSON.stringify(xs[key]) ?? 'absent'}`;
      }
    }
    return `${field} is ${JSON.stringify(y) ?? 'absent'}, there ${JSON.stringify(x) ?? 'absent'}`;
  }
  return 'the configurations differ';
}

/**
 * Adds shard summaries into one. They must share grid, settings, batch size, arrivals, budget,
 * check mode, engine and shard count, and cover distinct shards. Shards of a job array run side
 * by side, so the merged rate is all events over the longest shard's wall time (not the sum of
 * the shards' rates, which overstates it when shards start at different times); the bytes read
 * count once, and alpha is fitted again from the added multiplicity bins.
 */
export function mergeSummaries(summaries: readonly { name: string; summary: RunSummary }[]): RunSummary {
  if (summaries.length === 0) throw new Error('merge: no summaries given');
  for (const { name, summary } of summaries) {
    if (summary?.format !== 'jetlag-run-summary' || typeof summary.configuration !== 'object') {
      throw new Error(`${name}: not a jetlag run summary (format ${JSON.stringify(summary?.format)})`);
    }
    if (!(MERGE_READS_VERSIONS as readonly unknown[]).includes(summary.version)) {
      throw new Error(`${name}: summary version ${JSON.stringify(summary.version)}, this jetlag reads versions ${MERGE_READS_VERSIONS.join(' and ')} only (rerun that shard with this jetlag)`);
    }
    const problem = shapeProblem(summary);
    if (problem !== null) throw new Error(`${name}: not a jetlag run summary: ${problem}`);
  }
  const first = summaries[0];
  const key = mergeKey(first.summary.configuration);
  let records: number | null = null;
  const seen = new Map<number, string>();
  const tally = new RunTally();
  let wallSeconds = 0;
  let partial = false;
  const reasons: string[] = [];
  const machines: MachineInfo[] = [];
  const saturations: Saturation[] = [];
  const busyReasons: { shards: number[]; busyReason: string | null }[] = [];
  for (const { name, summary } of summaries) {
    if (mergeKey(summary.configuration) !== key) {
      throw new Error(`${name}: configuration differs from ${first.name}: ${firstDifference(first.summary.configuration, summary.configuration)} (input label, grid, settings, pileup steps, grooming, batch, arrivals, budget, check, engine, --events, shard count, --program-cpu and --engine-in-flight must agree)`);
    }
    // shards of one job run alike: rates and latencies of different pools do not add into one run's
    const workers = summary.configuration.workers;
    const firstWorkers = first.summary.configuration.workers;
    if (workers !== firstWorkers) {
      throw new Error(`${name}: ran ${workers} worker${workers === 1 ? '' : 's'}, ${first.name} ${firstWorkers}: shards of one job must run the same number of workers (give each the same --workers)`);
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
    const shardTally = tallyFromSummary(summary, name);
    if (shardTally.saturation) saturations.push(shardTally.saturation);
    busyReasons.push({ shards: summary.shards.map((shard) => shard.index), busyReason: summary.machineLoad?.busyReason ?? null });
    tally.merge(shardTally);
    wallSeconds = Math.max(wallSeconds, summary.throughput.wallSeconds);
    if (summary.partial) {
      partial = true;
      reasons.push(`${name}: ${summary.partialReason ?? 'partial'}`);
    }
    for (const machine of summary.machines ?? [summary.machine]) {
      if (!machines.some((m) => JSON.stringify(m) === JSON.stringify(machine))) machines.push(machine);
    }
  }
  tally.saturation = mergedSaturation(saturations, tally.read, wallSeconds);
  // each reason once, naming the shards that gave it (the shards' own lines do not say whose they are)
  if (tally.machineLoad) tally.machineLoad.busyReason = shardBusyReasons(busyReasons);
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
    rateBasis: `all shards' events over the longest shard's wall time`,
  });
}

/**
 * What a summary lacks that merging reads (null when nothing): a file edited by hand or cut
 * and patched must be named, not crash the merge. Only the shape is checked here; the
 * histograms check their own encoding when decoded.
 */
function shapeProblem(summary: RunSummary): string | null {
  const at = (path: string): unknown => path.split('.').reduce<unknown>((value, key) => (value !== null && typeof value === 'object' ? (value as Record<string, unknown>)[key] : undefined), summary);
  const kindOf = (value: unknown) => (value === null ? 'null' : Array.isArray(value) ? 'an array' : typeof value);
  const objects = ['configuration', 'configuration.shard', 'configuration.grid', 'configuration.settings', 'configuration.check', 'configuration.arrival', 'machine', 'events', 'throughput', 'check', 'histograms', 'histograms.stages', 'towers'];
  for (const path of objects) {
    const value = at(path);
    if (value === null || typeof value !== 'object' || Array.isArray(value)) return `${path} is ${kindOf(value)}, expected an object`;
  }
  const numbers = ['configuration.shard.index', 'configuration.shard.count', 'events.read', 'events.ok', 'events.invalid', 'events.failed',
    'throughput.bytesRead', 'throughput.wallSeconds', 'check.checked', 'check.agreeing', 'check.disagreeing', 'jets'];
  for (const path of numbers) {
    if (typeof at(path) !== 'number') return `${path} is ${kindOf(at(path))}, expected a number`;
  }
  for (const path of ['configuration.engine', 'configuration.arrival.mode']) {
    if (typeof at(path) !== 'string') return `${path} is ${kindOf(at(path))}, expected a string`;
  }
  for (const path of ['shards', 'invalidEvents', 'failedBatches', 'check.differences', 'histograms.multiplicity']) {
    if (!Array.isArray(at(path))) return `${path} is ${kindOf(at(path))}, expected an array`;
  }
  if (summary.machines !== undefined && !Array.isArray(summary.machines)) return `machines is ${kindOf(summary.machines)}, expected an array`;
  for (const [k, shard] of summary.shards.entries()) {
    if (typeof shard?.index !== 'number' || typeof shard?.count !== 'number') return `shards[${k}] is not {index, count}`;
  }
  for (const [k, entry] of summary.histograms.multiplicity.entries()) {
    // bins index arrays: only small whole numbers
    if (!Number.isInteger(entry?.bin) || entry.bin < 0 || entry.bin > 4096 || typeof entry.sumTowers !== 'number') return `histograms.multiplicity[${k}] is not {bin, sumTowers, histogram}`;
  }
  for (const [key, value] of Object.entries(summary.towers)) {
    if (typeof value !== 'number') return `towers.${key} is ${kindOf(value)}, expected a number`;
  }
  return null;
}

/** Reads a summary written by `jetlag run --json` (its shape is checked by mergeSummaries). */
export function readSummary(path: string): RunSummary {
  let bytes: Buffer;
  try {
    bytes = readFileSync(path);
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    throw new InputError(path, code === 'ENOENT' ? 'cannot open: no such file'
      : code === 'EISDIR' ? 'cannot read: is a directory'
      : code === 'EACCES' ? 'cannot open: permission denied'
      : `cannot read (${code ?? 'error'})`);
  }
  // binary data is named, never printed: control bytes other than tab and line ends
  for (let k = 0; k < bytes.length; k++) {
    const b = bytes[k];
    if ((b < 0x20 && b !== 0x09 && b !== 0x0a && b !== 0x0d) || b === 0x7f) {
      const what = bytes[0] === 0x1f && bytes[1] === 0x8b ? 'gzip data' : `binary data (byte 0x${b.toString(16).padStart(2, '0')})`;
      throw new InputError(path, `not a JSON summary: ${what}`, undefined, k);
    }
  }
  const text = bytes.toString('utf8');
  try {
    return JSON.parse(text) as RunSummary;
  } catch (error) {
    // the engine's message quotes the input; keep only what is wrong and where
    const message = (error as Error).message;
    const offset = Buffer.byteLength(text.slice(0, firstJsonErrorAt(text)), 'utf8');
    const located = /^(.*) in JSON at position \d+/.exec(message);
    const reason = /^Unexpected end/.test(message) ? 'it ends too early'
      : located ? located[1].replace(/^Unexpected non-whitespace character after JSON$/, 'more text after the JSON value')
      : /^Unexpected token/.test(message) ? 'an unexpected character' : 'not valid JSON';
    throw new InputError(path, `not a JSON summary: ${reason}`, undefined, offset);
  }
}

/**
 * Where JSON text first goes wrong, in characters. The parser names a position for some errors
 * only, so this asks it about prefixes: a prefix that parses, or fails only because it ends,
 * holds no error; the longest such prefix ends where the error is (binary search, O(n log n)).
 */
function firstJsonErrorAt(text: string): number {
  const clean = (length: number): boolean => {
    try {
      JSON.parse(text.slice(0, length));
      return true;
    } catch (error) {
      const message = (error as Error).message;
      if (/^Unexpected end|^Unterminated/.test(message)) return true;
      const position = /position (\d+)/.exec(message);
      return position !== null && Number(position[1]) >= length;
    }
  };
  if (clean(text.length)) return text.length; // it only ends too early
  let low = 0; // clean(low) holds
  let high = text.length; // clean(high) fails: the whole text does not parse
  while (high - low > 1) {
    const middle = (low + high) >>> 1;
    if (clean(middle)) low = middle; else high = middle;
  }
  return low;
}
