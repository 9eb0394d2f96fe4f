// The validation report as terminal text (diagnostics go to stderr, this goes to stdout).

import type { DistributionSummary } from './deviation-histogram.js';
import { ratio, type BinReport, type JetDisagreement, type ValidationReport } from './validation-report.js';

function percent(value: number | null): string {
  return value === null ? '-' : `${(100 * value).toFixed(value > 0.99 && value < 1 ? 3 : 2)} %`;
}

/** a number in a few significant digits; a response near 1 keeps the digits that differ */
function short(value: number | null, digits = 4): string {
  if (value === null) return '-';
  if (value === 0) return '0';
  const rounded = Number(value.toPrecision(digits));
  return Math.abs(rounded) < 1e-3 ? rounded.toExponential(Math.max(0, digits - 1)).replace(/\.?0+e/, 'e') : rounded.toString();
}

function responseText(value: number | null): string {
  if (value === null) return '-';
  const deviation = value - 1;
  if (deviation === 0) return '1';
  // enough digits to show the deviation itself
  const digits = Math.min(17, Math.max(5, Math.ceil(-Math.log10(Math.abs(deviation))) + 3));
  return Number(value.toPrecision(digits)).toString();
}

function distributionLine(name: string, d: DistributionSummary, asResponse: boolean): string {
  const show = asResponse ? responseText : (v: number | null) => short(v);
  const q = d.quantiles;
  return `${name.padEnd(22)}n ${d.count}  mean ${show(d.mean)}  rms ${short(d.rms)}  ` +
    `p01 ${show(q.p01)}  p16 ${show(q.p16)}  p50 ${show(q.p50)}  p84 ${show(q.p84)}  p99 ${show(q.p99)}  max ${show(d.max)}`;
}

function binTable(title: string, bins: BinReport[]): string[] {
  const rows = bins.filter((b) => b.referenceJets > 0 || b.candidateJets > 0);
  if (rows.length === 0) return [];
  // the response as its deviation from 1, which is what differs between bins
  const cells = (values: string[]) => '  ' + values[0].padEnd(12) + values.slice(1).map((v) => v.padStart(11)).join('');
  const lines = [cells([title, 'ref jets', 'eff', 'agree', 'fake rate', 'resp-1 p50', 'resp rms', 'ΔR p50', 'ΔR p99'])];
  for (const b of rows) {
    const range = b.high === null ? `>= ${b.low}` : `${b.low}-${b.high}`;
    const p50 = b.response.quantiles.p50;
    lines.push(cells([range, String(b.referenceJets), percent(b.efficiency), percent(ratio(b.agreeing, b.referenceJets)), percent(b.fakeRate),
      p50 === null ? '-' : short(p50 - 1, 3), short(b.response.rms, 3), short(b.deltaR.quantiles.p50, 3), short(b.deltaR.quantiles.p99, 3)]));
  }
  return lines;
}

/** jets listed per worst event in the terminal text */
const WORST_JETS_SHOWN = 4;

function jetText(jet: { pt: number; y: number; phi: number } | null): string {
  return jet === null ? 'none' : `pt ${jet.pt.toFixed(2)} y ${jet.y.toFixed(3)} phi ${jet.phi.toFixed(3)}`;
}

/** The report as terminal text (diagnostics go to stderr, this goes to stdout). */
export function formatValidationReport(report: ValidationReport): string {
  const e = report.events;
  const j = report.jets;
  const t = report.tolerance;
  const lines: string[] = [];
  lines.push(`tolerance: match ΔR < ${t.matchR}, agree when |pt ratio - 1| <= ${t.ptTol} and ΔR <= ${t.angleTol}, jets above ${t.ptMin} GeV`);
  lines.push(`events:   ${e.valid} valid, ${e.agreeing} agree (${percent(e.agreeingFraction)}), ${e.disagreeing} disagree` +
    ` (${e.missingFromCandidate} missing from the candidate, ${e.invalidInCandidate} invalid in the candidate only);` +
    ` ${e.invalidInEvents} invalid in EVENTS, not compared`);
  lines.push(`jets:     reference ${j.referenceAbove}, matched ${j.matched} (efficiency ${percent(j.efficiency)}),` +
    ` agreeing ${j.agreeing} (${percent(j.agreeingFraction)}); candidate ${j.candidateAbove},` +
    ` extra ${j.extraCandidates} (fake rate ${percent(j.fakeRate)}, of which unmatched ${j.unmatchedCandidates})`);
  lines.push(distributionLine('pt response (c/r)', report.response, true));
  lines.push(distributionLine('ΔR', report.deltaR, false));
  const pt = binTable('pt [GeV]', report.byReferencePt);
  if (pt.length > 0) lines.push('by reference pt:', ...pt);
  const eta = binTable('|η|', report.byAbsEta);
  if (eta.length > 0) lines.push('by reference |η|:', ...eta);
  for (const [kind, problem] of Object.entries(report.problems)) {
    lines.push(`${kind}: ${problem.count}${problem.examples.length > 0 ? `, e.g. ${problem.examples.slice(0, 3).join('; ')}` : ''}`);
  }
  if (report.worstEvents.length > 0) {
    lines.push(`worst events (${report.worstEvents.length}), the jets that do not agree:`);
    for (const w of report.worstEvents) {
      const count = (status: JetDisagreement['status']) => w.jets.filter((d) => d.status === status).length;
      const parts = [[count('unmatched'), 'unmatched'], [count('outside tolerance'), 'outside tolerance'], [count('extra'), 'extra']]
        .filter(([n]) => (n as number) > 0).map(([n, what]) => `${n} ${what}`);
      lines.push(`  event ${w.event}: ${parts.join(', ')}`);
      for (const d of w.jets.slice(0, WORST_JETS_SHOWN)) {
        const label = d.referenceJet !== null ? `ref jet ${d.referenceJet}` : `candidate jet ${d.candidateJet}`;
        const numbers = d.ptRatio !== null ? `  pt ratio ${responseText(d.ptRatio)}  ΔR ${short(d.deltaR, 3)}` : '';
        lines.push(`    ${`${label} ${d.status}`.padEnd(31)}ref ${jetText(d.reference).padEnd(32)}candidate ${jetText(d.candidate).padEnd(32)}${numbers}`.trimEnd());
      }
      if (w.jets.length > WORST_JETS_SHOWN) lines.push(`    ... and ${w.jets.length - WORST_JETS_SHOWN} more (all in the JSON report)`);
    }
  }
  return lines.join('\n') + '\n';
}
