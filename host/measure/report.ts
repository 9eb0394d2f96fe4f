// The compact terminal report of a run (or a merge): one block of plain text, widths fixed so
// that runs line up when printed one after another. Every figure says what it includes: the
// header names every setting that changes the result, every percentile row its event count,
// and a high percentile resting on few events is marked.

import type { LatencyStats } from './latency.js';
import type { RunSummary } from './summary.js';
import type { CpuWaitFigures } from './harness-figures.js';
import { PILEUP_STAGES, type PileupStage } from './run-tally.js';
import { offeredText, saturationCause } from './saturation-figures.js';
import { describePileup } from '../clustering/pileup/settings.js';
import { describeGrooming, groomingIsOn } from '../clustering/grooming/settings.js';

/** the pileup chain's stages as the latency table names them (the HTML report's too) */
export const PILEUP_STAGE_LABELS: Record<PileupStage, string> = {
  softkiller: 'SoftKiller',
  clustering: 'ghosts, clustering',
  'rho-patches': 'ρ from patches',
  'rho-kt': 'ρ from kt jets',
  subtraction: 'areas, subtraction',
};

const COLUMNS = ['events', 'p50', 'p90', 'p99', 'p99.9', 'max', 'mean'] as const;
const LABEL_WIDTH = 24;
const CELL_WIDTH = 10;

/**
 * Fewer events than these and the percentile rests on under ten events above it: marked.
 * (A p99 on 1,000 events is the 10th-highest value; common practice.)
 */
export const P99_MIN_EVENTS = 1000;
export const P999_MIN_EVENTS = 10_000;
const FEW_EVENTS_MARK = '*';

function micros(value: number): string {
  if (value >= 1000) return value.toFixed(0);
  if (value >= 100) return value.toFixed(1);
  return value.toFixed(2);
}

function grouped(value: number): string {
  return Math.round(value).toLocaleString('en-US');
}

/** The row's cells; a p99 or p99.9 on too few events carries the mark. */
function latencyRow(label: string, stats: LatencyStats): { text: string; marked: boolean } {
  const head = `  ${label.padEnd(LABEL_WIDTH)}${grouped(stats.count).padStart(CELL_WIDTH)}`;
  if (stats.count === 0) return { text: `${head}${'—'.padStart(CELL_WIDTH)}`, marked: false };
  const cell = (value: number | null, few: boolean) => (value === null ? '—' : micros(value) + (few ? FEW_EVENTS_MARK : ''));
  const fewP99 = stats.count < P99_MIN_EVENTS;
  const fewP999 = stats.count < P999_MIN_EVENTS;
  const cells = [
    cell(stats.p50_us, false), cell(stats.p90_us, false), cell(stats.p99_us, fewP99), cell(stats.p999_us, fewP999),
    cell(stats.max_us, false), cell(stats.mean_us, false),
  ];
  return { text: head + cells.map((c) => c.padStart(CELL_WIDTH)).join(''), marked: fewP99 || fewP999 };
}

function algorithmName(p: number): string {
  if (p === -1) return 'anti-kt';
  if (p === 0) return 'Cambridge/Aachen';
  if (p === 1) return 'kt';
  return 'generalised kt';
}

/** Every setting that changes the result, in one line. */
function headerLine(summary: RunSummary): string {
  const c = summary.configuration;
  const s = c.settings;
  const g = c.grid;
  // merged shards ran side by side, each offered the rate: the farm was offered their sum (the rate line's figure)
  const shardsRun = summary.shards.length;
  const rateHz = c.arrival.rateHz ?? 0;
  const offered = shardsRun > 1 ? `${grouped(rateHz)} Hz per shard, ${offeredText(grouped(rateHz * shardsRun), shardsRun)}` : `${grouped(rateHz)} Hz`;
  const loop = c.arrival.mode === 'closed' ? 'closed loop' : `open loop ${c.arrival.mode === 'poisson' ? 'Poisson' : 'fixed'} ${offered}`;
  const pileup = describePileup(c.pileup);
  const grooming = c.grooming && groomingIsOn(c.grooming) ? describeGrooming(c.grooming) : '';
  const chain = (pileup ? ` · pileup ${pileup}` : '') + (grooming ? ` · grooming ${grooming}` : '');
  const shardText = summary.shards.length === 1 && c.shard.count === 1
    ? ''
    : ` · shards ${summary.shards.map((x) => x.index).join(',')} of ${c.shard.count}`;
  return `${c.file} · ${algorithmName(s.p)} p=${s.p} R=${s.radius} ${s.recombination === 'wta' ? 'WTA' : 'E-scheme'}` +
    ` ptMin ${s.ptMin} GeV threshold ${s.threshold} GeV · grid η ${g.etaMin}..${g.etaMax} ${g.etaBins}×${g.phiBins}${chain}` +
    ` · engine ${c.engine}${c.programCpu === 'same' ? ' (each worker and its program held on one CPU)' : ''}${c.engineInFlight !== undefined ? `, ${c.engineInFlight} event${c.engineInFlight === 1 ? '' : 's'} in flight` : ''} · ${c.workers} worker${c.workers === 1 ? '' : 's'}, batch ${c.batch} · ${loop}${shardText}`;
}

function latencyLines(summary: RunSummary): string[] {
  const openLoop = summary.configuration.arrival.mode !== 'closed';
  const l = summary.latency;
  const rows = [latencyRow('service', l.service)];
  const chain = l.pileupStages ?? {};
  for (const stage of PILEUP_STAGES) {
    const stats = chain[stage];
    if (stats) rows.push(latencyRow(`  ${PILEUP_STAGE_LABELS[stage]}`, stats));
  }
  if (l.grooming) rows.push(latencyRow('  grooming', l.grooming));
  if (openLoop) {
    rows.push(latencyRow('wait', l.wait), latencyRow('return', l.return), latencyRow('end-to-end', l.endToEnd));
    rows.push(latencyRow('harness: dispatch late', summary.harness.dispatchLateness));
    const { overhead, cpuWait } = summary.harness;
    if (overhead) rows.push(latencyRow('end-to-end − service', overhead));
    if (cpuWait?.perEvent) rows.push(latencyRow('  not delayed', cpuWait.perEvent.overheadUndelayed), latencyRow('CPU wait', cpuWait.perEvent.wait));
  }
  const lines = [`  ${'latency µs'.padEnd(LABEL_WIDTH)}${COLUMNS.map((col) => col.padStart(CELL_WIDTH)).join('')}`];
  lines.push(...rows.map((row) => row.text));
  lines.push(`  ${''.padEnd(LABEL_WIDTH)}service: the engine's own time per event, measured inside the worker around clustering`);
  if (l.pileupStages) lines.push(`  ${''.padEnd(LABEL_WIDTH)}indented: the pileup chain's stages inside service, per event (spec part two)`);
  if (l.grooming) lines.push(`  ${''.padEnd(LABEL_WIDTH)}grooming: trimming and soft drop of the event's jets, inside service (spec section 12)`);
  if (openLoop) {
    lines.push(`  ${''.padEnd(LABEL_WIDTH)}end-to-end = wait + service + return, per event, from its scheduled arrival to its result on the main thread;`);
    lines.push(`  ${''.padEnd(LABEL_WIDTH)}dispatch late: the harness handing events over after their scheduled time (part of wait)`);
    const cpuWait = summary.harness.cpuWait;
    if (cpuWait) lines.push(...cpuWaitLines(cpuWait, summary.throughput.wallSeconds, summary.shards.length));
  } else {
    lines.push(`  ${''.padEnd(LABEL_WIDTH)}a closed loop measures capacity; latency under load needs an open loop (--rate or --poisson)`);
  }
  if (rows.some((row) => row.marked)) {
    lines.push(`  ${''.padEnd(LABEL_WIDTH)}${FEW_EVENTS_MARK} p99 on fewer than ${grouped(P99_MIN_EVENTS)} events or p99.9 on fewer than ${grouped(P999_MIN_EVENTS)}: few events above it, a rough figure`);
  }
  return lines;
}

/** The threads' wait for a CPU over the run, and with per-event figures what their rows mean. */
function cpuWaitLines(cpuWait: CpuWaitFigures, wallSeconds: number, shards: number): string[] {
  const pad = `  ${''.padEnd(LABEL_WIDTH)}`;
  const lines = [`${pad}CPU wait: ready to run while another thread (the machine's other work, or this run's own) held the core,`];
  if (cpuWait.workersMs === null || cpuWait.mainMs === null || cpuWait.servingThreads === null) {
    lines.push(`${pad}Linux run-queue time: the run's totals unknown (a thread or a shard could not give its figure)`);
  } else {
    // one run: its serving threads for its wall time; merged shards ran side by side, so no share is given
    const share = shards === 1 && wallSeconds > 0 && cpuWait.servingThreads > 0
      ? ` (${((100 * cpuWait.workersMs) / (1e3 * wallSeconds * cpuWait.servingThreads)).toFixed(1)} % of their time serving)` : '';
    lines.push(`${pad}Linux run-queue time: workers ${grouped(cpuWait.workersMs)} ms in all${share}, main thread ${grouped(cpuWait.mainMs)} ms`);
  }
  const perEvent = cpuWait.perEvent;
  if (perEvent) {
    const share = perEvent.events > 0 ? ((100 * perEvent.delayed) / perEvent.events).toFixed(1) : '0.0';
    lines.push(
      `${pad}per event, on its worker's thread and the main thread: ${grouped(perEvent.delayed)} of ${grouped(perEvent.events)} events (${share} %) spent`,
      `${pad}over ${perEvent.delayedOverUs} µs on a run queue; "not delayed": end-to-end − service of the others (queueing behind one that was stays in)`,
    );
  }
  return lines;
}

function throughputLine(summary: RunSummary): string {
  const t = summary.throughput;
  const what = summary.configuration.arrival.mode === 'closed' ? 'capacity' : 'throughput';
  const basis = t.basis.startsWith('events read / wall time') ? '' : ` (${t.basis})`;
  const load = summary.machineLoad;
  const cpu = load && summary.events.read > 0 ? ` · CPU ${micros((load.cpuSeconds * 1e6) / summary.events.read)} µs per event, all threads` : '';
  return `  ${what.padEnd(12)}${grouped(t.eventsPerSecond)} events/s over ${t.wallSeconds.toFixed(2)} s${basis}${cpu}`;
}

function scalingLines(summary: RunSummary): string[] {
  const s = summary.scaling;
  const bins = s.bins.filter((b) => b.nLow > 0).map((b) => `${b.nLow}-${b.nHigh}: ${grouped(b.events)}`).join(' · ');
  const lines = s.alpha === null
    ? [`  scaling     no exponent: ${s.reason}`]
    : [`  scaling     service ∝ N^${s.alpha.toFixed(2)} ± ${s.alphaError.toFixed(2)} (seeded bootstrap over events), N ${s.nMin}..${s.nMax}`];
  if (bins) lines.push(`              events per N bin: ${bins}`);
  return lines;
}

function findRateLine(summary: RunSummary): string | null {
  const f = summary.findRate;
  if (!f) return null;
  const lowest = Math.min(...f.trials.map((t) => t.rateHz));
  const how = `${f.trials.length} open-loop trials, ${f.workers} worker${f.workers === 1 ? '' : 's'}`;
  const main = f.rateHz === null
    ? `  find-rate   p99 over ${f.budgetUs} µs even at the lowest rate tried, ${grouped(lowest)} Hz (${how})`
    : f.atCeiling
      ? `  find-rate   p99 within ${f.budgetUs} µs up to at least ${grouped(f.rateHz)} Hz (the search's ceiling, the closed loop's events/s; ${how})`
      : `  find-rate   p99 within ${f.budgetUs} µs up to ${grouped(f.rateHz)} Hz (${how})`;
  const fewest = Math.min(...f.trials.map((t) => t.events));
  return fewest < P99_MIN_EVENTS ? `${main}; each trial's p99 rests on only ${grouped(fewest)} events` : main;
}

export function formatReport(summary: RunSummary): string {
  const c = summary.configuration;
  const lines: string[] = [headerLine(summary)];
  const towers = summary.towersPerEvent;
  lines.push(towers.mean === null
    ? '  towers      none clustered'
    : `  towers      per event: mean ${towers.mean.toFixed(1)} · p50 ${grouped(towers.p50!)} · max ${grouped(towers.max!)}`);
  const e = summary.events;
  lines.push(`  events      read ${grouped(e.read)} · ok ${grouped(e.ok)} · invalid ${grouped(e.invalid)} · failed ${grouped(e.failed)}`);
  const load = summary.machineLoad;
  if (load?.busy) lines.push(`  BUSY        figures taken on a busy machine: ${load.busyReason}`);
  if (load?.programCpuNote) lines.push(`  machine     ${load.programCpuNote}`);
  lines.push(...latencyLines(summary));
  lines.push(throughputLine(summary));
  const saturation = summary.saturation;
  if (saturation) {
    const rates = `offered ${offeredText(grouped(saturation.offeredHz), saturation.shards)}, sustained ${grouped(saturation.sustainedHz)} Hz` +
      (saturation.shards > 1 ? ` (${saturation.sustainedBasis})` : '');
    // merged: the sums compare shards that may have run for different times, so the verdict is each shard's own
    const kept = saturation.shards > 1 ? '; each shard kept up with its own rate' : '';
    lines.push(saturation.saturated ? `  SATURATED   ${rates}: the pool did not keep up, ${saturationCause(saturation)}` : `  rate        ${rates}${kept}`);
  }
  if (summary.budget) {
    const b = summary.budget;
    lines.push(`  budget      ${b.budgetUs} µs on ${b.measuredOn}: ${grouped(b.over)} events over (${(b.fractionOver * 100).toFixed(3)} %)`);
  } else {
    lines.push('  budget      none set (--budget-us)');
  }
  if (c.check.mode !== 'none') {
    const k = summary.check;
    lines.push(`  check       ${grouped(k.checked)} checked against the reference · ${grouped(k.agreeing)} agree · ${grouped(k.disagreeing)} disagree`);
    if (k.timing) lines.push(`              checked ${k.timing}`);
  }
  lines.push(...scalingLines(summary));
  const findRate = findRateLine(summary);
  if (findRate) lines.push(findRate);
  if (summary.scanWorkers) {
    const points = summary.scanWorkers.points.map((p) => `${p.workers}: ${grouped(p.eventsPerSecond)}/s ×${p.speedup.toFixed(2)}`);
    lines.push(`  workers     ${points.join(' · ')}`);
  }
  if (load) {
    lines.push(`  machine     load average ${load.loadAverageStart.toFixed(2)} before, ${load.loadAverageEnd.toFixed(2)} after, ${load.cores} cores · ` +
      `CPU ${load.cpuSeconds.toFixed(2)} s received for ${load.workerBusySeconds.toFixed(2)} s of worker time on events`);
  }
  if (summary.partial) lines.push(`  PARTIAL     ${summary.partialReason ?? 'run stopped early'}`);
  return lines.join('\n') + '\n';
}
