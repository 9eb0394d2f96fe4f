// Shard merge: summaries of sharded runs decode back into tallies, add, and render again through
// the same code as one run, so merged counts and percentiles are exactly those of one run over
// the same events.

import { readFileSync } from 'node:fs';
import { InputError } from '../errors.js';
import { LatencyRecorder } from './latency.js';
import { RunTally, STAGES } from './run-tally.js';
import { renderSummary, type MachineInfo, type RunConfiguration, type RunSummary } from './summary.js';

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

/** Reads a summary written by `jetlag run --json` (its shape is checked by mergeSummaries). */
export function readSummary(path: string): RunSummary {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (error) {
    throw new InputError(path, `cannot read: ${(error as Error).message}`);
  }
  try {
    return JSON.parse(text) as RunSummary;
  } catch (error) {
    throw new InputError(path, `not JSON: ${(error as Error).message}`);
  }
}
