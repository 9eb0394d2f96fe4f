// The tables and lines of the run section: settings, counts that add up, latency figures,
// saturation and machine load; one column per run when several are side by side. Every text
// from a summary is escaped here.

import { escapeHtml, formatNumber } from './escape.js';
import type { LatencySeries, RunView } from './report-data.js';
import type { LatencyStats } from '../measure/latency.js';
import { P99_MIN_EVENTS, P999_MIN_EVENTS, PILEUP_STAGE_LABELS } from '../measure/report.js';
import { PILEUP_STAGES } from '../measure/run-tally.js';
import { saturationCause } from '../measure/saturation-figures.js';
import { describePileup } from '../clustering/pileup/settings.js';
import { describeGrooming } from '../clustering/grooming/settings.js';

type Cell = string | number | null | undefined;

/** A table with a head row of run names and one row per label; cells are plain text, escaped here. */
export function table(className: string, head: string[], rows: [string, ...Cell[]][]): string {
  const headHtml = `<tr>${head.map((cell) => `<th scope="col">${escapeHtml(cell)}</th>`).join('')}</tr>`;
  const bodyHtml = rows.map(([label, ...cells]) =>
    `<tr><th scope="row">${escapeHtml(label)}</th>${cells.map((cell) => `<td>${escapeHtml(typeof cell === 'number' ? formatNumber(cell) : cell ?? '–')}</td>`).join('')}</tr>`).join('');
  return `<table class="${escapeHtml(className)}"><thead>${headHtml}</thead><tbody>${bodyHtml}</tbody></table>`;
}

function algorithmName(p: number | undefined): string {
  if (p === -1) return 'anti-kt (p = -1)';
  if (p === 0) return 'Cambridge/Aachen (p = 0)';
  if (p === 1) return 'kt (p = 1)';
  return `generalised kt (p = ${p})`;
}

/** a setting's description, 'none' when empty, and '–' when the summary's value cannot be read */
function settingText(describe: () => string): Cell {
  try {
    return describe() || 'none';
  } catch {
    return null;
  }
}

export function settingsTable(runs: RunView[]): string {
  const c = (run: RunView) => run.configuration;
  const row = (label: string, of: (run: RunView) => Cell): [string, ...Cell[]] => [label, ...runs.map(of)];
  const grid = (run: RunView) => {
    const g = c(run).grid;
    return g ? `η ${g.etaMin} to ${g.etaMax} in ${g.etaBins} bins × φ in ${g.phiBins} bins` : null;
  };
  const loop = (run: RunView) => {
    const arrival = c(run).arrival;
    if (!arrival || arrival.mode === 'closed') return 'closed loop (as fast as the pool takes events)';
    return `open loop, ${arrival.mode} arrivals at ${arrival.rateHz} events/s${arrival.seed !== null && arrival.seed !== undefined ? ` (seed ${arrival.seed})` : ''}`;
  };
  return table('settings', ['setting', ...runs.map((run) => run.name)], [
    row('summary', (run) => run.source),
    row('input', (run) => c(run).file),
    row('input label', (run) => c(run).input?.label),
    row('engine', (run) => c(run).engine),
    row('algorithm', (run) => algorithmName(c(run).settings?.p)),
    row('R', (run) => c(run).settings?.radius),
    row('ptMin [GeV]', (run) => c(run).settings?.ptMin),
    row('tower threshold [GeV]', (run) => c(run).settings?.threshold),
    row('recombination', (run) => c(run).settings?.recombination),
    row('pileup steps', (run) => settingText(() => describePileup(c(run).pileup))),
    row('grooming', (run) => settingText(() => c(run).grooming ? describeGrooming(c(run).grooming) : '')),
    row('grid', grid),
    row('workers', (run) => c(run).workers),
    row('events per batch', (run) => c(run).batch),
    row('arrivals', loop),
    row('budget [µs]', (run) => c(run).budgetUs ?? 'none'),
    row('reference check', (run) => c(run).check ? `${c(run).check.mode}${c(run).check.mode === 'fraction' ? ` ${c(run).check.fraction}` : ''}` : null),
    row('shards', (run) => Array.isArray(run.summary.shards) ? run.summary.shards.map((s: { index: number; count: number }) => `${s.index}/${s.count}`).join(', ') : null),
    row('machine', (run) => run.summary.machine ? `${run.summary.machine.cpuModel}, ${run.summary.machine.cores} cores, node ${run.summary.machine.node}` : null),
  ]);
}

export function countsTable(runs: RunView[]): string {
  const row = (label: string, of: (run: RunView) => Cell): [string, ...Cell[]] => [label, ...runs.map(of)];
  const adds = (run: RunView) => {
    const e = run.events;
    return e.ok + e.invalid + e.failed === e.read ? `${formatNumber(e.ok)} + ${formatNumber(e.invalid)} + ${formatNumber(e.failed)} = ${formatNumber(e.read)} ✓` : 'do not add up';
  };
  const towers = (run: RunView) => run.summary.towers ?? {};
  return table('counts', ['count', ...runs.map((run) => run.name)], [
    row('events read', (run) => run.events.read),
    row('clustered (ok)', (run) => run.events.ok),
    row('invalid', (run) => run.events.invalid),
    row('in failed batches', (run) => run.events.failed),
    row('ok + invalid + failed = read', adds),
    row('jets reported', (run) => run.summary.jets),
    row('towers offered', (run) => towers(run).offered),
    row('… below threshold', (run) => towers(run).belowThreshold),
    row('… clustered', (run) => towers(run).clustered),
    row('deposits outside acceptance', (run) => towers(run).outsideAcceptance),
    row('towers per event (mean / p50 / max)', (run) => run.summary.towersPerEvent
      ? `${formatNumber(run.summary.towersPerEvent.mean)} / ${formatNumber(run.summary.towersPerEvent.p50)} / ${formatNumber(run.summary.towersPerEvent.max)}` : null),
    row('checked against the reference', (run) => run.summary.check?.checked),
    row('… agreeing bit for bit', (run) => run.summary.check?.agreeing),
    row('… disagreeing', (run) => run.summary.check?.disagreeing),
    row('over budget', (run) => run.summary.budget ? `${formatNumber(run.summary.budget.over)} (${formatNumber(100 * run.summary.budget.fractionOver, 3)} %, on ${run.summary.budget.measuredOn})` : 'no budget'),
    row('throughput [events/s]', (run) => run.summary.throughput?.eventsPerSecond),
    row('wall time [s]', (run) => run.summary.throughput?.wallSeconds),
  ]);
}

/** Latency figures: one row per figure (and run), one column per statistic. */
export function latencyTable(runs: RunView[]): string {
  const figures: [string, (run: RunView) => LatencySeries | null][] = [
    ['service', (run) => run.service],
    ['wait (open loop)', (run) => run.wait],
    ['return (open loop)', (run) => run.returnTrip],
    ['end-to-end (open loop)', (run) => run.endToEnd],
    ['dispatch lateness (harness)', (run) => run.dispatchLateness],
    ['end-to-end − service (open loop)', (run) => run.overhead],
    ['… of events not delayed for a CPU', (run) => run.overheadUndelayed],
    ['CPU wait per event (run queue)', (run) => run.cpuWait],
  ];
  const several = runs.length > 1;
  const rows: [string, ...Cell[]][] = [];
  for (const [name, of] of figures) {
    for (const run of runs) {
      const series = of(run);
      if (series === null) continue;
      const s = series.stats;
      const lead: [string, ...Cell[]] = several ? [name, run.name] : [name];
      rows.push([...lead, s.count, s.mean_us, s.p50_us, s.p90_us, markSmall(s, 'p99_us', P99_MIN_EVENTS), markSmall(s, 'p999_us', P999_MIN_EVENTS), s.max_us]);
    }
  }
  const stageRows = (label: string, of: (run: RunView) => LatencyStats | null | undefined) => {
    for (const run of runs) {
      const s = of(run);
      if (!s || s.count === 0) continue;
      const lead: [string, ...Cell[]] = several ? [label, run.name] : [label];
      rows.push([...lead, s.count, s.mean_us, s.p50_us, s.p90_us, markSmall(s, 'p99_us', P99_MIN_EVENTS), markSmall(s, 'p999_us', P999_MIN_EVENTS), s.max_us]);
    }
  };
  for (const stage of ['decode', 'bin', 'cluster', 'check', 'encode']) {
    stageRows(`stage ${stage}`, (run) => run.stages[stage]);
    if (stage !== 'cluster') continue;
    // the pileup chain's stages and grooming are parts of the cluster stage, when they ran
    for (const step of PILEUP_STAGES) stageRows(`stage cluster › ${PILEUP_STAGE_LABELS[step]}`, (run) => run.pileupStages[step]);
    stageRows('stage cluster › grooming (trimming, soft drop)', (run) => run.grooming);
  }
  const head = ['figure [µs]', ...(several ? ['run'] : []), 'events', 'mean', 'p50', 'p90', 'p99', 'p99.9', 'max'];
  return table('latency', head, rows);
}

/** A tail percentile on too few events to mean much is marked so (common practice: ~10 events beyond it). */
function markSmall(stats: LatencyStats, key: 'p99_us' | 'p999_us', enough: number): Cell {
  const value = stats[key];
  if (value === null) return null;
  return stats.count < enough ? `${formatNumber(value)} (few events)` : value;
}

/** One line per run that says something about the conditions: partial, saturated, busy machine. */
export function conditionLines(runs: RunView[]): string {
  const lines: string[] = [];
  for (const run of runs) {
    const who = runs.length > 1 ? `${run.name}: ` : '';
    const s = run.summary;
    if (s.partial) lines.push(`${who}partial run: ${s.partialReason ?? 'stopped early'}`);
    const saturation = s.saturation;
    if (saturation && typeof saturation === 'object') {
      lines.push(saturation.saturated
        ? `${who}saturated: offered ${formatNumber(saturation.offeredHz)} events/s, sustained only ${formatNumber(saturation.sustainedHz)} events/s; ${saturationCause(saturation)}`
        : `${who}not saturated: offered ${formatNumber(saturation.offeredHz)} events/s, sustained ${formatNumber(saturation.sustainedHz)} events/s${(saturation.shards ?? 1) > 1 ? ` (summed over ${saturation.shards} shards; each kept up with its own rate)` : ''}`);
    }
    const load = s.machineLoad;
    if (load && typeof load === 'object' && load.busy) lines.push(`${who}the figures were taken on a busy machine${load.busyReason ? `: ${load.busyReason}` : ''}`);
    for (const invalid of (s.invalidEvents ?? []).slice(0, 5)) {
      lines.push(`${who}invalid: ${invalid.event === null ? `record ${invalid.record}` : `event ${invalid.event}`}, byte ${invalid.offset}: ${invalid.reason}`);
    }
    if ((s.invalidEvents?.length ?? 0) > 5) lines.push(`${who}… ${s.events.invalid - 5} more invalid events`);
  }
  if (lines.length === 0) return '';
  return `<ul class="conditions">${lines.map((line) => `<li>${escapeHtml(line)}</li>`).join('')}</ul>`;
}
