// One chart: a vega-lite specification compiled by vega-lite and drawn to SVG by vega, here in
// Node, so the page needs no script to show it. Data are given inline (never a URL), and the
// view gets a loader that refuses every load, so nothing is fetched while drawing either.

import * as vega from 'vega';
import { compile, type TopLevelSpec } from 'vega-lite';
import { CHART_CONFIG } from './theme.js';
import { escapeHtml } from './escape.js';

export type ChartSpec = TopLevelSpec;

/** A loader for vega that fails every request: our charts carry their data. */
const noLoader = {
  ...vega.loader(),
  load: async (uri: string) => { throw new Error(`report charts load nothing (asked for ${uri})`); },
  sanitize: async (uri: string) => { throw new Error(`report charts load nothing (asked for ${uri})`); },
  http: async (uri: string) => { throw new Error(`report charts load nothing (asked for ${uri})`); },
  file: async (uri: string) => { throw new Error(`report charts load nothing (asked for ${uri})`); },
};

/**
 * vega-lite's messages are about our own specifications (a scale property it drops, a legend
 * merged): warnings stay out of the user's terminal, errors still throw.
 */
const quietLogger = vega.logger(vega.None);

/** The chart's SVG text (vega escapes the texts it draws). */
export async function chartSvg(spec: ChartSpec): Promise<string> {
  const withConfig = { ...spec, config: { ...CHART_CONFIG, ...(spec as { config?: object }).config } } as unknown as ChartSpec;
  const compiled = compile(withConfig, { logger: quietLogger }).spec;
  const view = new vega.View(vega.parse(compiled), { renderer: 'none', loader: noLoader as unknown as vega.Loader });
  try {
    return await view.toSVG();
  } finally {
    view.finalize();
  }
}

/**
 * A chart in the page: a figure with the SVG and a caption. `name` marks it for the page's
 * tests (data-chart); the caption is plain text and escaped here.
 */
export async function chartFigure(name: string, spec: ChartSpec, caption: string): Promise<string> {
  const svg = await chartSvg(spec);
  return `<figure class="chart" data-chart="${escapeHtml(name)}">${svg}<figcaption>${escapeHtml(caption)}</figcaption></figure>`;
}
