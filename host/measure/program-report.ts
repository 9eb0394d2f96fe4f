// The text report's lines for a run whose engine was a program (`--engine exec:`): which check
// mode ran, the program's own time beside jetlag's round trip, and the events it failed on.

import type { LatencyStats } from './latency.js';
import type { RunSummary } from './summary.js';

function us(value: number | null): string {
  return value === null ? '-' : `${value.toFixed(1)} µs`;
}

function percent(value: number | null): string {
  return value === null ? '-' : `${(100 * value).toFixed(2)}%`;
}

function row(name: string, stats: LatencyStats): string {
  return `  ${name.padEnd(38)} p50 ${us(stats.p50_us).padStart(10)}  p99 ${us(stats.p99_us).padStart(10)}  max ${us(stats.max_us).padStart(10)}  (${stats.count} events)`;
}

/** '' for a run of an in-process engine. */
export function formatProgramReport(summary: RunSummary): string {
  const roundTrip = summary.latency.roundTrip;
  if (!roundTrip) return '';
  const lines = [`engine program ${summary.configuration.engine}:`];
  lines.push(row("the program's own time (service)", summary.latency.service));
  lines.push(row('round trip (jetlag writes -> reads)', roundTrip));
  if (summary.latency.pipe) {
    lines.push(row('round trip - own time: the pipe\'s cost', summary.latency.pipe));
    lines.push('    (the event\'s write and the answer\'s read on both sides, the program\'s parse and serialisation outside its own clock, and the wake-ups of both)');
  }
  const failed = summary.failedEvents ?? [];
  const reasons = new Map<string, number>();
  for (const entry of failed) reasons.set(entry.reason, (reasons.get(entry.reason) ?? 0) + 1);
  const reasonText = [...reasons].map(([reason, count]) => `${count} ${reason}`).join(', ');
  lines.push(`  failed events ${summary.events.failed}${reasonText ? ` (${reasonText})` : ''}, restarts ${summary.engineRestarts ?? 0}`);
  const check = summary.check;
  if (check.mode === 'tolerance' && check.tolerance) {
    const t = check.tolerance;
    lines.push(`  check: tolerance mode (spec section 7), not bit for bit: ${t.agreeing} of ${t.checked} events agree (${percent(t.agreement)}); `
      + `efficiency ${percent(t.efficiency)}, fake rate ${percent(t.fakeRate)}, response ${t.response === null ? '-' : t.response.toFixed(6)}`);
  } else if (check.mode === null) {
    lines.push('  check: none (--check none)');
  } else {
    lines.push(`  check: bit for bit: ${check.agreeing} of ${check.checked} events agree`);
  }
  return lines.join('\n') + '\n';
}
