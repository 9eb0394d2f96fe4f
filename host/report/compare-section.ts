// The compare section: agreement, efficiency and fake rate in bins of reference pt and |η| with
// central Clopper-Pearson intervals at 68.27 % (validate/beta-quantile.ts), the pt response
// and ΔR of matched pairs by their quantiles, the turn-on curves when compare made them, the
// counts, the worst events and the problems met. Texts from the document are escaped.

import { chartFigure, type ChartSpec } from './render-chart.js';
import { escapeHtml, formatNumber } from './escape.js';
import { table } from './run-tables.js';
import { FAINT, MARK_COLOUR, SERIES_COLOURS, SERIES_DASHES, SERIES_SHAPES } from './theme.js';
import { CONFIDENCE_68, clopperPearson } from '../validate/beta-quantile.js';
import type { CompareView } from './report-data.js';
import type { BinReport } from '../validate/validation-report.js';
import type { DistributionSummary } from '../validate/deviation-histogram.js';

const WIDTH = 520;

function binLabel(bin: BinReport): string {
  return bin.high === null ? `≥ ${bin.low}` : `${bin.low}–${bin.high}`;
}

/** Fraction with its 68 % interval, or nothing when there is no whole. */
function fractionRow(bins: BinReport[], quantity: string, part: (bin: BinReport) => number, whole: (bin: BinReport) => number): object[] {
  const interval = new Float64Array(2);
  return bins.flatMap((bin) => {
    const n = whole(bin);
    if (n <= 0) return [];
    const k = part(bin);
    clopperPearson(k, n, CONFIDENCE_68, interval);
    return [{ bin: binLabel(bin), quantity, value: k / n, low: interval[0], high: interval[1], n }];
  });
}

async function binnedChart(name: string, bins: BinReport[], axisTitle: string): Promise<string> {
  const order = bins.map(binLabel);
  const upper = [
    ...fractionRow(bins, 'efficiency (matched / reference jets)', (b) => b.matched, (b) => b.referenceJets),
    ...fractionRow(bins, 'agreeing / reference jets', (b) => b.agreeing, (b) => b.referenceJets),
  ];
  const lower = fractionRow(bins, 'fake rate (extra / candidate jets)', (b) => b.extraCandidates, (b) => b.candidateJets);
  if (upper.length === 0 && lower.length === 0) return '';
  const x = { field: 'bin', type: 'ordinal', sort: order, scale: { domain: order }, axis: { title: axisTitle, labelAngle: 0 } };
  const quantities = ['efficiency (matched / reference jets)', 'agreeing / reference jets', 'fake rate (extra / candidate jets)'];
  const color = { field: 'quantity', type: 'nominal', scale: { domain: quantities, range: [SERIES_COLOURS[0], SERIES_COLOURS[1], SERIES_COLOURS[2]] }, legend: { title: null, orient: 'bottom', direction: 'vertical' } };
  const shape = { field: 'quantity', type: 'nominal', scale: { domain: quantities, range: [SERIES_SHAPES[0], SERIES_SHAPES[1], SERIES_SHAPES[2]] }, legend: { title: null, orient: 'bottom', direction: 'vertical' } };
  const panel = (rows: object[], yTitle: string) => ({
    width: WIDTH, height: 170,
    data: { values: rows },
    layer: [
      { mark: { type: 'rule', strokeWidth: 1.5 }, encoding: { x, y: { field: 'low', type: 'quantitative', scale: { zero: false }, axis: { title: yTitle, format: '.1%' } }, y2: { field: 'high' }, color, xOffset: { field: 'quantity' } } },
      { mark: { type: 'point', filled: true, size: 55 }, encoding: { x, y: { field: 'value', type: 'quantitative' }, color, shape, xOffset: { field: 'quantity' } } },
    ],
  });
  const panels = [];
  if (upper.length > 0) panels.push(panel(upper, 'fraction of reference jets'));
  if (lower.length > 0) panels.push(panel(lower, 'fraction of candidate jets'));
  const spec = { title: `Agreement, efficiency and fake rate by ${axisTitle}`, vconcat: panels, resolve: { scale: { color: 'shared', shape: 'shared' } } };
  return chartFigure(name, spec as unknown as ChartSpec,
    'Points: the fraction in each bin; bars: central Clopper–Pearson interval at 68.27 %. Jets above ptMin; fakes are binned by the candidate jet.');
}

function quantileRows(group: string, summary: DistributionSummary): object[] {
  const q = summary.quantiles;
  if (summary.count === 0 || q.p50 === null) return [];
  return [{ group, p01: q.p01, p05: q.p05, p16: q.p16, p50: q.p50, p84: q.p84, p95: q.p95, p99: q.p99, n: summary.count }];
}

async function distributionChart(name: string, title: string, yTitle: string, rows: object[], order: string[], log: boolean, caption: string): Promise<string> {
  const usable = log ? rows.filter((row) => ((row as { p50: number }).p50 ?? 0) > 0) : rows;
  if (usable.length === 0) return '';
  const x = { field: 'group', type: 'ordinal', sort: order, scale: { domain: order }, axis: { title: 'reference jet pt [GeV]', labelAngle: 0 } };
  const scale = log ? { type: 'log' } : { zero: false };
  const y = (field: string) => ({ field, type: 'quantitative', scale, axis: { title: yTitle, format: log ? '.0e' : '~g' } });
  const clip = log ? [{ calculate: 'max(datum.p01, datum.p50 / 1e6, 1e-300)', as: 'p01' }, { calculate: 'max(datum.p05, datum.p50 / 1e6, 1e-300)', as: 'p05' }, { calculate: 'max(datum.p16, datum.p50 / 1e6, 1e-300)', as: 'p16' }] : [];
  const spec = {
    width: WIDTH, height: 220, title, data: { values: usable }, transform: clip,
    layer: [
      { mark: { type: 'rule', color: FAINT, strokeWidth: 1 }, encoding: { x, y: y('p01'), y2: { field: 'p99' } } },
      { mark: { type: 'rule', color: SERIES_COLOURS[3], strokeWidth: 5 }, encoding: { x, y: y('p05'), y2: { field: 'p95' } } },
      { mark: { type: 'rule', color: SERIES_COLOURS[0], strokeWidth: 9 }, encoding: { x, y: y('p16'), y2: { field: 'p84' } } },
      { mark: { type: 'tick', color: SERIES_COLOURS[1], thickness: 3, size: 18 }, encoding: { x, y: y('p50') } },
    ],
  };
  return chartFigure(name, spec as ChartSpec, caption);
}

async function turnOnChart(view: CompareView): Promise<string> {
  const curves = view.document.turnOn;
  if (!Array.isArray(curves) || curves.length === 0) return '';
  const names = curves.map((curve) => {
    const what = curve.observable === 'jet1' ? 'leading jet pt' : curve.observable === 'jetN' ? `jet ${curve.jet ?? '?'} pt` : 'HT';
    return `${what} ≥ ${curve.threshold} GeV`;
  });
  const rows = curves.flatMap((curve, k) => curve.bins.map((bin) => ({ curve: names[k], x: (bin.lo + bin.hi) / 2, lo: bin.lo, hi: bin.hi, efficiency: bin.efficiency, low: bin.low68, high: bin.high68, events: bin.events })));
  const marks = curves.flatMap((curve, k) => [
    ...(curve.x50 !== null ? [{ curve: names[k], x: curve.x50, text: `50 % at ${formatNumber(curve.x50, 3)} GeV` }] : []),
    ...(curve.x95 !== null ? [{ curve: names[k], x: curve.x95, text: `95 % at ${formatNumber(curve.x95, 3)} GeV` }] : []),
  ]);
  const at = (list: readonly unknown[]) => names.map((_, k) => list[k % list.length]);
  const color = { field: 'curve', type: 'nominal', scale: { domain: names, range: at(SERIES_COLOURS) }, legend: { title: 'trigger (candidate side)', orient: 'bottom', direction: 'vertical' } };
  const x = { field: 'x', type: 'quantitative', axis: { title: 'offline quantity from the reference [GeV] (leading jet pt, n-th jet pt or HT)' } };
  const y = { field: 'efficiency', type: 'quantitative', scale: { domain: [0, 1.05] }, axis: { title: 'trigger efficiency', format: '.0%' } };
  const spec = {
    width: WIDTH, height: 260, title: 'Turn-on curves',
    layer: [
      { data: { values: rows }, mark: { type: 'rule' }, encoding: { x, y: { field: 'low', type: 'quantitative' }, y2: { field: 'high' }, color } },
      { data: { values: rows }, mark: { type: 'rule', strokeWidth: 1 }, encoding: { x: { field: 'lo', type: 'quantitative' }, x2: { field: 'hi' }, y, color } },
      { data: { values: rows }, mark: { type: 'line', point: { filled: true, size: 30 } }, encoding: { x, y, color, strokeDash: { field: 'curve', type: 'nominal', scale: { domain: names, range: at(SERIES_DASHES) }, legend: null } } },
      ...(marks.length > 0 ? [{ data: { values: marks }, mark: { type: 'rule', strokeDash: [2, 2], color: MARK_COLOUR }, encoding: { x: { field: 'x', type: 'quantitative' } } }] : []),
    ],
  };
  const marksText = marks.map((mark) => `${mark.curve}: ${mark.text}`).join('; ');
  return chartFigure('turn-on', spec as ChartSpec,
    `Efficiency per bin with its central Clopper–Pearson interval at 68.27 % (vertical bars) and the bin's width (horizontal bars). ${marksText ? `Dotted: ${marksText}.` : ''}`);
}

function countsTable(view: CompareView): string {
  const e = view.document.events;
  const j = view.document.jets;
  const adds = e.compared + e.missingFromCandidate + e.invalidInCandidate === e.valid ? ' ✓' : ' (do not add up)';
  return table('compare-counts', ['count', 'value'], [
    ['events read', e.read],
    ['invalid in EVENTS (not compared)', e.invalidInEvents],
    ['valid', e.valid],
    ['compared + missing from candidate + invalid in candidate', `${formatNumber(e.compared)} + ${formatNumber(e.missingFromCandidate)} + ${formatNumber(e.invalidInCandidate)} = ${formatNumber(e.valid)}${adds}`],
    ['agreeing events', e.agreeing],
    ['disagreeing events', e.disagreeing],
    ['agreeing fraction', e.agreeingFraction],
    ['reference jets above ptMin', j.referenceAbove],
    ['matched', j.matched],
    ['agreeing jets', j.agreeing],
    ['efficiency', j.efficiency],
    ['candidate jets above ptMin', j.candidateAbove],
    ['extra candidate jets', j.extraCandidates],
    ['fake rate', j.fakeRate],
    ['required agreeing fraction', view.document.require ?? null],
    ['verdict', view.document.passed === undefined ? null : view.document.passed ? 'PASS' : 'FAIL'],
  ]);
}

function worstTable(view: CompareView): string {
  const worst = view.document.worstEvents ?? [];
  if (worst.length === 0) return '<p>No event disagrees.</p>';
  const jet = (j: { pt: number; y: number; phi: number } | null) => j === null ? '–' : `pt ${formatNumber(j.pt)}, y ${formatNumber(j.y, 3)}, φ ${formatNumber(j.phi, 3)}`;
  const rows: [string, ...(string | number | null)[]][] = [];
  for (const event of worst) {
    for (const disagreement of event.jets.slice(0, 4)) {
      rows.push([String(event.event), formatNumber(event.badness), disagreement.status, jet(disagreement.reference), jet(disagreement.candidate), disagreement.ptRatio, disagreement.deltaR]);
    }
    if (event.jets.length > 4) rows.push([String(event.event), '', `… ${event.jets.length - 4} more jets`, '', '', null, null]);
  }
  return table('worst', ['event', 'badness', 'status', 'reference jet [GeV, rad]', 'candidate jet [GeV, rad]', 'pt ratio', 'ΔR'], rows);
}

function problemsList(view: CompareView): string {
  const problems = Object.entries(view.document.problems ?? {});
  if (problems.length === 0) return '';
  const items = problems.map(([name, problem]) => `<li>${escapeHtml(name)}: ${escapeHtml(problem.count)}${problem.examples.length > 0 ? ` (for example ${problem.examples.slice(0, 3).map(escapeHtml).join('; ')})` : ''}</li>`);
  return `<h3>Problems met</h3><ul class="conditions">${items.join('')}</ul>`;
}

export async function compareSection(view: CompareView, display: string): Promise<string> {
  const d = view.document;
  const ptBins = d.byReferencePt ?? [];
  const order = ['all', ...ptBins.map(binLabel)];
  const responseRows = [...quantileRows('all', d.response), ...ptBins.flatMap((bin) => quantileRows(binLabel(bin), bin.response))];
  const deltaRRows = [...quantileRows('all', d.deltaR), ...ptBins.flatMap((bin) => quantileRows(binLabel(bin), bin.deltaR))];
  const distributionsCaption = 'Thick bar: 16 %–84 % of matched pairs; middle bar: 5 %–95 %; thin line: 1 %–99 %; tick: median.';
  const candidate = d.candidate ?? {};
  const who = [`candidate ${d.files?.candidate ?? '?'}`, candidate.format ? `(${candidate.format}${candidate.engine ? `, engine ${candidate.engine}` : ''})` : '',
    candidate.producer ? `made by ${candidate.producer}` : '', `against the reference on ${d.files?.events ?? '?'}`].filter((part) => part !== '').join(' ');
  const t = d.tolerance;
  const charts = await Promise.all([
    binnedChart('compare-by-pt', ptBins, 'reference jet pt [GeV]'),
    binnedChart('compare-by-eta', d.byAbsEta ?? [], 'reference jet |η|'),
    distributionChart('response', 'pt response of matched jets', 'pt_candidate / pt_reference − 1', responseRows, order, false, distributionsCaption),
    distributionChart('delta-r', 'ΔR between matched jet axes', 'ΔR in (y, φ) (log scale)', deltaRRows, order, true, `${distributionsCaption} Pairs at ΔR = 0 do not show on the log scale.`),
    turnOnChart(view),
  ]);
  return [
    `<section class="compare"><h2>Compare: ${escapeHtml(view.name)}</h2>`,
    `<p class="lead">${escapeHtml(who)}. Source: ${escapeHtml(view.source)}.</p>`,
    t ? `<p>Tolerances: match within ΔR ${escapeHtml(t.matchR)}; agree when |pt ratio − 1| ≤ ${escapeHtml(t.ptTol)} and ΔR ≤ ${escapeHtml(t.angleTol)}; jets above ptMin ${escapeHtml(t.ptMin)} GeV must agree.</p>` : '',
    d.inputError ? `<p class="warning">Input error: ${escapeHtml(d.inputError)} (the report covers what came before).</p>` : '',
    '<div class="tables">', countsTable(view), '</div>',
    ...charts,
    display,
    '<h3>Worst events</h3>', worstTable(view),
    problemsList(view),
    '</section>',
  ].join('\n');
}
