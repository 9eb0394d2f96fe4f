// The charts of the run section, one function each; each takes the runs shown side by side and
// returns a figure, or '' when none of them has the data the chart needs.

import { chartFigure, type ChartSpec } from './render-chart.js';
import { FAINT, MARK_COLOUR, SERIES_COLOURS, SERIES_DASHES, SERIES_SHAPES } from './theme.js';
import type { LatencySeries, RunView } from './report-data.js';
import type { PlainHistogram } from '../measure/plain-histogram.js';

const WIDTH = 560;
const HEIGHT = 260;

/** Colour, dash and shape scales over the run names, so a run looks the same in every chart. */
export function seriesScales(names: string[]) {
  const at = (list: readonly unknown[]) => names.map((_, k) => list[k % list.length]);
  return {
    color: { domain: names, range: at(SERIES_COLOURS) },
    strokeDash: { domain: names, range: at(SERIES_DASHES) },
    shape: { domain: names, range: at(SERIES_SHAPES) },
  };
}

/** The log bins of a histogram with the empty ones between filled in, so steps and sums read right. */
export function denseBins(plain: PlainHistogram): { lowUs: number; highUs: number; count: number }[] {
  if (plain.bins.length === 0) return [];
  const perDecade = plain.binsPerDecade;
  const indexOf = (lowUs: number) => Math.round(Math.log10(lowUs) * perDecade);
  const byIndex = new Map<number, number>();
  for (const bin of plain.bins) byIndex.set(indexOf(bin.lowUs), bin.count);
  const first = indexOf(plain.bins[0].lowUs);
  const last = indexOf(plain.bins[plain.bins.length - 1].lowUs);
  const dense = [];
  for (let k = first; k <= last; k++) {
    dense.push({ lowUs: 10 ** (k / perDecade), highUs: 10 ** ((k + 1) / perDecade), count: byIndex.get(k) ?? 0 });
  }
  return dense;
}

function budgetLayer(budgetUs: number | null, axis: 'x' | 'y'): object[] {
  if (budgetUs === null) return [];
  return [
    { data: { values: [{ budget: budgetUs }] }, mark: { type: 'rule', color: MARK_COLOUR, strokeWidth: 1.5, strokeDash: [5, 3] }, encoding: { [axis]: { field: 'budget', type: 'quantitative' } } },
    {
      data: { values: [{ budget: budgetUs, text: `budget ${budgetUs} µs` }] },
      mark: axis === 'x'
        ? { type: 'text', color: MARK_COLOUR, angle: 270, dx: -8, dy: -4, align: 'right', baseline: 'bottom', fontSize: 11 }
        : { type: 'text', color: MARK_COLOUR, align: 'left', dx: 4, dy: -6, fontSize: 11 },
      encoding: axis === 'x'
        ? { x: { field: 'budget', type: 'quantitative' }, y: { value: 0 }, text: { field: 'text' } }
        : { y: { field: 'budget', type: 'quantitative' }, x: { value: 0 }, text: { field: 'text' } },
    },
  ];
}

/** the budget that applies to a run's figure, or null */
function budgetOf(run: RunView): number | null {
  return typeof run.configuration.budgetUs === 'number' ? run.configuration.budgetUs : null;
}

/** Service time histogram on a log axis: bars for one run, steps for several. */
export async function serviceHistogram(runs: RunView[]): Promise<string> {
  const shown = runs.filter((run) => run.service?.plain && run.service.plain.bins.length > 0);
  if (shown.length === 0) return '';
  const rows = shown.flatMap((run) => denseBins(run.service!.plain!).map((bin) => ({ run: run.name, ...bin })));
  const x = { field: 'lowUs', type: 'quantitative', scale: { type: 'log' }, axis: { title: 'service time per event [µs] (log scale)', format: '~s' } };
  const y = { field: 'count', type: 'quantitative', axis: { title: 'events per bin (20 bins per decade)' } };
  const scales = seriesScales(shown.map((run) => run.name));
  const spec = shown.length === 1
    ? { data: { values: rows }, mark: { type: 'rect', color: SERIES_COLOURS[0], stroke: '#ffffff', strokeWidth: 0.3 }, encoding: { x, x2: { field: 'highUs' }, y, y2: { datum: 0 } } }
    : {
      data: { values: rows.flatMap((row) => [{ ...row, at: row.lowUs }, { ...row, at: row.highUs }]) },
      mark: { type: 'line', interpolate: 'linear' },
      encoding: {
        x: { ...x, field: 'at' }, y,
        color: { field: 'run', type: 'nominal', scale: scales.color, legend: { title: 'run', orient: 'bottom', direction: 'vertical' } },
        strokeDash: { field: 'run', type: 'nominal', scale: scales.strokeDash, legend: null },
      },
    };
  return chartFigure('service-histogram', { width: WIDTH, height: HEIGHT, title: 'Service time per event', ...spec } as ChartSpec,
    'The engine\'s own time per event, measured inside the worker around clustering; logarithmic bins, 20 per decade.');
}

function cumulativeRows(run: string, quantity: string, series: LatencySeries | null): object[] {
  if (!series?.plain || series.plain.bins.length === 0) return [];
  const bins = denseBins(series.plain);
  const total = bins.reduce((sum, bin) => sum + bin.count, 0);
  let below = 0;
  const rows = [{ run, quantity, key: `${run} | ${quantity}`, us: bins[0].lowUs, fraction: 0 }];
  for (const bin of bins) {
    below += bin.count;
    rows.push({ run, quantity, key: `${run} | ${quantity}`, us: bin.highUs, fraction: below / total });
  }
  return rows;
}

/** Fraction of events under t: service time for every run, end-to-end too for open loops; the budget drawn. */
export async function cumulativeCurve(runs: RunView[]): Promise<string> {
  const rows = runs.flatMap((run) => [...cumulativeRows(run.name, 'service', run.service), ...cumulativeRows(run.name, 'end-to-end', run.endToEnd)]);
  if (rows.length === 0) return '';
  const budgets = [...new Set(runs.map(budgetOf).filter((b): b is number => b !== null))];
  const scales = seriesScales(runs.map((run) => run.name));
  const quantities = ['service', 'end-to-end'].filter((q) => rows.some((row) => (row as { quantity: string }).quantity === q));
  const spec = {
    width: WIDTH, height: HEIGHT, title: 'Fraction of events done within t',
    layer: [
      {
        data: { values: rows },
        mark: { type: 'line', interpolate: 'step-before' },
        encoding: {
          x: { field: 'us', type: 'quantitative', scale: { type: 'log' }, axis: { title: 't [µs] (log scale)', format: '~s' } },
          y: { field: 'fraction', type: 'quantitative', scale: { domain: [0, 1] }, axis: { title: 'fraction of events with latency ≤ t', format: '.0%' } },
          color: { field: 'run', type: 'nominal', scale: scales.color, legend: { title: 'run', orient: 'bottom', direction: 'vertical' } },
          strokeDash: { field: 'quantity', type: 'nominal', scale: { domain: quantities, range: quantities.map((q) => (q === 'service' ? [] : [6, 3])) }, legend: { title: 'latency', orient: 'bottom' } },
          detail: { field: 'key' },
        },
      },
      ...budgets.flatMap((budget) => budgetLayer(budget, 'x')),
    ],
  };
  return chartFigure('cumulative', spec as ChartSpec,
    'Cumulative distribution (step at each bin edge). Solid: service time; dashed: open-loop end-to-end, from scheduled arrival to result. The budget applies to end-to-end in an open loop, to the worker\'s time in a closed one.');
}

/** Open loop: where an event's end-to-end time goes, mean and percentiles of wait, service and return. */
export async function openLoopBreakdown(runs: RunView[]): Promise<string> {
  const shown = runs.filter((run) => run.endToEnd !== null);
  if (shown.length === 0) return '';
  const parts: [string, (run: RunView) => LatencySeries | null][] = [
    ['wait', (run) => run.wait], ['service', (run) => run.service], ['return', (run) => run.returnTrip], ['end-to-end', (run) => run.endToEnd],
  ];
  const rows: object[] = [];
  for (const run of shown) {
    for (const [part, of] of parts) {
      const stats = of(run)?.stats;
      if (!stats) continue;
      for (const [percentile, value] of [['p50', stats.p50_us], ['p90', stats.p90_us], ['p99', stats.p99_us], ['p99.9', stats.p999_us], ['mean', stats.mean_us]] as const) {
        if (value !== null && value > 0) rows.push({ run: run.name, part, percentile, us: value });
      }
    }
  }
  if (rows.length === 0) return '';
  const spec = {
    title: 'Open loop: end-to-end latency and its parts',
    data: { values: rows },
    facet: { row: { field: 'run', type: 'nominal', header: { title: null, labelAngle: 0, labelAlign: 'left', labelAnchor: 'start', labelOrient: 'top', labelFontSize: 11 } } },
    spec: {
      width: WIDTH, height: 120,
      layer: [
        {
          mark: { type: 'rule', color: FAINT },
          transform: [{ filter: "datum.percentile !== 'mean'" }],
          encoding: {
            y: { field: 'part', type: 'nominal', sort: parts.map(([part]) => part), axis: { title: null } },
            x: { aggregate: 'min', field: 'us', type: 'quantitative' },
            x2: { aggregate: 'max', field: 'us' },
          },
        },
        {
          mark: { type: 'point', filled: true, size: 60 },
          encoding: {
            y: { field: 'part', type: 'nominal', sort: parts.map(([part]) => part), axis: { title: null } },
            x: { field: 'us', type: 'quantitative', scale: { type: 'log' }, axis: { title: 'latency per event [µs] (log scale)', format: '~s' } },
            shape: { field: 'percentile', type: 'nominal', scale: { domain: ['mean', 'p50', 'p90', 'p99', 'p99.9'], range: ['stroke', 'circle', 'square', 'triangle-up', 'diamond'] }, legend: { title: 'figure', orient: 'bottom' } },
            color: { field: 'percentile', type: 'nominal', scale: { domain: ['mean', 'p50', 'p90', 'p99', 'p99.9'], range: ['#111111', SERIES_COLOURS[0], SERIES_COLOURS[3], SERIES_COLOURS[1], SERIES_COLOURS[4]] }, legend: { title: 'figure', orient: 'bottom' } },
          },
        },
      ],
    },
  };
  return chartFigure('open-loop', spec as ChartSpec,
    'wait: scheduled arrival to the event\'s start in a worker; service: the engine\'s time; return: end of service to the result back on the main thread; end-to-end: scheduled arrival to result. The percentiles of the parts do not add up to those of the whole; the means do.');
}

/** Least-squares intercept of ln t = ln c + alpha ln N over the bins, alpha given. */
function interceptOf(bins: { nLow: number; nHigh: number; events: number; p50_us: number }[], alpha: number): number | null {
  const used = bins.filter((bin) => bin.events > 0 && bin.p50_us > 0 && bin.nLow > 0);
  if (used.length === 0) return null;
  let sum = 0;
  for (const bin of used) sum += Math.log(bin.p50_us) - alpha * Math.log(Math.sqrt(bin.nLow * Math.max(bin.nHigh, bin.nLow)));
  return sum / used.length;
}

/** Service time against towers per event: thinned events, the bins' medians, the fitted power law. */
export async function scalingChart(runs: RunView[]): Promise<string> {
  const shown = runs.filter((run) => (run.scaling && run.scaling.bins.length > 0) || (run.points && run.points.length > 0));
  if (shown.length === 0) return '';
  const scales = seriesScales(shown.map((run) => run.name));
  const points = shown.flatMap((run) => (run.points ?? []).filter((p) => p.towers > 0 && p.serviceUs > 0).map((p) => ({ run: run.name, towers: p.towers, us: p.serviceUs })));
  const bins = shown.flatMap((run) => (run.scaling?.bins ?? []).filter((bin) => bin.nLow > 0 && bin.p50_us > 0)
    .map((bin) => ({ run: run.name, nLow: bin.nLow, nHigh: Math.max(bin.nHigh, bin.nLow), nMid: Math.sqrt(bin.nLow * Math.max(bin.nHigh, bin.nLow)), us: bin.p50_us, events: bin.events })));
  const fits: object[] = [];
  const titles: string[] = [];
  for (const run of shown) {
    const scaling = run.scaling;
    if (!scaling) continue;
    if (scaling.alpha === null) { titles.push(`${shown.length > 1 ? `${run.name}: ` : ''}no α (${scaling.reason ?? 'too few bins'})`); continue; }
    const intercept = interceptOf(scaling.bins, scaling.alpha);
    const nMin = scaling.nMin ?? scaling.bins[0]?.nLow;
    const nMax = scaling.nMax ?? scaling.bins[scaling.bins.length - 1]?.nHigh;
    const error = scaling.alphaError !== null ? ` ± ${scaling.alphaError.toFixed(2)}` : '';
    titles.push(`${shown.length > 1 ? `${run.name}: ` : ''}α = ${scaling.alpha.toFixed(2)}${error} over N ${nMin}–${nMax}`);
    if (intercept === null || !(nMin > 0) || !(nMax > 0)) continue;
    for (let k = 0; k <= 20; k++) {
      const n = nMin * (nMax / nMin) ** (k / 20);
      fits.push({ run: run.name, towers: n, us: Math.exp(intercept + scaling.alpha * Math.log(n)) });
    }
  }
  const x = { field: 'towers', type: 'quantitative', scale: { type: 'log', zero: false }, axis: { title: 'towers per event N (entering clustering, log scale)', format: '~s' } };
  const y = { field: 'us', type: 'quantitative', scale: { type: 'log', zero: false }, axis: { title: 'service time [µs] (log scale)', format: '~s' } };
  const color = { field: 'run', type: 'nominal', scale: scales.color, legend: shown.length > 1 ? { title: 'run', orient: 'bottom', direction: 'vertical' } : null };
  const layers: object[] = [];
  if (points.length > 0) layers.push({ data: { values: points }, mark: { type: 'point', filled: true, size: 9, opacity: 0.35 }, encoding: { x, y, color } });
  if (bins.length > 0) {
    layers.push({ data: { values: bins }, mark: { type: 'rule', strokeWidth: 1.5 }, encoding: { x: { ...x, field: 'nLow' }, x2: { field: 'nHigh' }, y, color } });
    layers.push({ data: { values: bins }, mark: { type: 'point', filled: true, size: 50, stroke: '#ffffff', strokeWidth: 0.8 }, encoding: { x: { ...x, field: 'nMid' }, y, color, shape: { field: 'run', type: 'nominal', scale: scales.shape, legend: null } } });
  }
  if (fits.length > 0) layers.push({ data: { values: fits }, mark: { type: 'line', strokeWidth: 2 }, encoding: { x, y, color, strokeDash: { value: [6, 3] } } });
  const spec = { width: WIDTH, height: HEIGHT, title: 'Service time against towers per event', layer: layers };
  const what = points.length > 0 ? 'Small dots: single events (thinned). ' : 'Per-event points need jetlag run --report or --per-event; the bins are shown. ';
  return chartFigure('scaling', spec as ChartSpec,
    `${titles.join('. ')}. ${what}Large points: median service time of each multiplicity bin, with the bin's range of N; dashed: the fitted power law t ∝ N^α.`);
}

/** Events/s against workers from --scan-workers, with linear scaling from the first point for scale. */
export async function workersChart(runs: RunView[]): Promise<string> {
  const shown = runs.filter((run) => Array.isArray(run.summary.scanWorkers?.points) && run.summary.scanWorkers.points.length > 0);
  if (shown.length === 0) return '';
  const scales = seriesScales(shown.map((run) => run.name));
  const rows = shown.flatMap((run) => run.summary.scanWorkers.points.map((p: { workers: number; eventsPerSecond: number }) => ({ run: run.name, workers: p.workers, rate: p.eventsPerSecond, kind: 'measured' })));
  const ideal = shown.flatMap((run) => {
    const list = run.summary.scanWorkers.points as { workers: number; eventsPerSecond: number }[];
    const first = list[0];
    return list.map((p) => ({ run: run.name, workers: p.workers, rate: first.eventsPerSecond * p.workers / first.workers }));
  });
  const x = { field: 'workers', type: 'quantitative', axis: { title: 'workers (threads)', tickMinStep: 1, format: 'd' } };
  const y = { field: 'rate', type: 'quantitative', axis: { title: 'throughput [events/s]' } };
  const color = { field: 'run', type: 'nominal', scale: scales.color, legend: { title: 'run', orient: 'bottom', direction: 'vertical' } };
  const spec = {
    width: WIDTH, height: HEIGHT, title: 'Throughput against workers (closed loop)',
    layer: [
      { data: { values: ideal }, mark: { type: 'line', strokeDash: [2, 3], strokeWidth: 1 }, encoding: { x, y, color } },
      { data: { values: rows }, mark: { type: 'line', point: true }, encoding: { x, y, color, shape: { field: 'run', type: 'nominal', scale: scales.shape, legend: null } } },
    ],
  };
  return chartFigure('workers', spec as ChartSpec, 'Solid: measured (jetlag run --scan-workers); dotted: the single-worker rate times the workers, for scale.');
}

/** p99 end-to-end against offered rate from --find-rate, the budget drawn. */
export async function findRateChart(runs: RunView[]): Promise<string> {
  const shown = runs.filter((run) => Array.isArray(run.summary.findRate?.trials) && run.summary.findRate.trials.length > 0);
  if (shown.length === 0) return '';
  const scales = seriesScales(shown.map((run) => run.name));
  const rows = shown.flatMap((run) => run.summary.findRate.trials
    .filter((t: { p99_us: number | null }) => t.p99_us !== null && t.p99_us > 0)
    .map((t: { rateHz: number; p99_us: number; withinBudget: boolean; events: number }) => ({ run: run.name, rate: t.rateHz, us: t.p99_us, within: t.withinBudget ? 'within budget' : 'over budget', events: t.events })));
  if (rows.length === 0) return '';
  const budgets = [...new Set(shown.map((run) => run.summary.findRate.budgetUs as number))];
  const x = { field: 'rate', type: 'quantitative', axis: { title: 'offered rate [events/s]' } };
  const y = { field: 'us', type: 'quantitative', scale: { type: 'log' }, axis: { title: 'end-to-end p99 [µs] (log scale)', format: '~s' } };
  const spec = {
    width: WIDTH, height: HEIGHT, title: 'Tail latency against offered rate (open loop)',
    layer: [
      { data: { values: rows }, mark: { type: 'line' }, encoding: { x, y, color: { field: 'run', type: 'nominal', scale: scales.color, legend: { title: 'run', orient: 'bottom', direction: 'vertical' } } } },
      {
        data: { values: rows }, mark: { type: 'point', size: 70, strokeWidth: 2 },
        encoding: {
          x, y, color: { field: 'run', type: 'nominal', scale: scales.color, legend: null },
          shape: { field: 'within', type: 'nominal', scale: { domain: ['within budget', 'over budget'], range: ['circle', 'cross'] }, legend: { title: 'p99', orient: 'bottom' } },
          fill: { field: 'within', type: 'nominal', scale: { domain: ['within budget', 'over budget'], range: ['#ffffff', MARK_COLOUR] }, legend: null },
        },
      },
      ...budgets.flatMap((budget) => budgetLayer(budget, 'y')),
    ],
  };
  return chartFigure('find-rate', spec as ChartSpec, 'Each point one open-loop trial of jetlag run --find-rate; a cross where the p99 exceeded the budget.');
}
