// The compact terminal report of a run (or a merge): one block of plain text, widths fixed so
// that runs line up when printed one after another.

import type { LatencyStats } from './latency.js';
import type { RunSummary } from './summary.js';

const COLUMNS = ['p50', 'p90', 'p99', 'p99.9', 'max', 'mean'] as const;

function micros(value: number): string {
  if (value >= 1000) return value.toFixed(0);
  if (value >= 100) return value.toFixed(1);
  return value.toFixed(2);
}

function latencyRow(label: string, stats: LatencyStats): string {
  if (stats.count === 0) return `  ${label.padEnd(12)}${'—'.padStart(10)}`;
  const cells = [stats.p50_us, stats.p90_us, stats.p99_us, stats.p999_us, stats.max_us, stats.mean_us];
  return `  ${label.padEnd(12)}${cells.map((v) => (v === null ? '—' : micros(v)).padStart(10)).join('')}`;
}

function algorithmName(p: number): string {
  if (p === -1) return 'anti-kt';
  if (p === 0) return 'Cambridge/Aachen';
  if (p === 1) return 'kt';
  return `generalised kt p=${p}`;
}

function grouped(value: number): string {
  return Math.round(value).toLocaleString('en-US');
}

export function formatReport(summary: RunSummary): string {
  const c = summary.configuration;
  const s = c.settings;
  const arrival = c.arrival.mode === 'closed'
    ? 'closed loop'
    : `open loop ${c.arrival.mode === 'poisson' ? 'Poisson' : 'fixed'} ${grouped(c.arrival.rateHz ?? 0)} Hz`;
  const shardText = summary.shards.length === 1 && c.shard.count === 1
    ? ''
    : ` · shards ${summary.shards.map((x) => x.index).join(',')} of ${c.shard.count}`;
  const lines: string[] = [];
  lines.push(`${c.file} · ${algorithmName(s.p)} R=${s.radius}${s.recombination === 'wta' ? ' WTA' : ''} · ${c.engine} · ${c.workers} worker${c.workers === 1 ? '' : 's'}, batch ${c.batch} · ${arrival}${shardText}`);
  const e = summary.events;
  lines.push(`  events      read ${grouped(e.read)} · ok ${grouped(e.ok)} · invalid ${grouped(e.invalid)} · failed ${grouped(e.failed)}`);
  lines.push(`  latency µs  ${COLUMNS.map((col) => col.padStart(10)).join('')}`);
  lines.push(latencyRow('cluster', summary.latency.cluster));
  lines.push(latencyRow('end-to-end', summary.latency.endToEnd));
  if (summary.latency.dispatchLag.count > 0) lines.push(latencyRow('  to dispatch', summary.latency.dispatchLag));
  lines.push(`  throughput  ${grouped(summary.throughput.eventsPerSecond)} events/s over ${summary.throughput.wallSeconds.toFixed(2)} s`);
  if (summary.budget) {
    const b = summary.budget;
    lines.push(`  budget      ${b.budgetUs} µs on ${b.measuredOn}: ${grouped(b.over)} events over (${(b.fractionOver * 100).toFixed(3)} %)`);
  } else {
    lines.push('  budget      none set (--budget-us)');
  }
  if (c.check.mode !== 'none') {
    const k = summary.check;
    lines.push(`  check       ${grouped(k.checked)} checked against the reference · ${grouped(k.agreeing)} agree · ${grouped(k.disagreeing)} disagree`);
  }
  if (summary.multiplicity.alpha !== null) {
    lines.push(`  scaling     cluster time ∝ N^${summary.multiplicity.alpha.toFixed(2)} over ${summary.multiplicity.binsUsed} tower-multiplicity bins`);
  }
  if (summary.findRate) {
    const f = summary.findRate;
    const lowest = Math.min(...f.trials.map((t) => t.rateHz));
    lines.push(f.rateHz === null
      ? `  find-rate   p99 over ${f.budgetUs} µs even at the lowest rate tried, ${grouped(lowest)} Hz`
      : `  find-rate   p99 within ${f.budgetUs} µs up to ${grouped(f.rateHz)} Hz (${f.trials.length} open-loop trials)`);
  }
  if (summary.scanWorkers) {
    const points = summary.scanWorkers.points.map((p) => `${p.workers}: ${grouped(p.eventsPerSecond)}/s ×${p.speedup.toFixed(2)}`);
    lines.push(`  workers     ${points.join(' · ')}`);
  }
  if (summary.partial) lines.push(`  PARTIAL     ${summary.partialReason ?? 'run stopped early'}`);
  return lines.join('\n') + '\n';
}
