// The report's colours and chart style, in one place. Chosen for print and for readers with
// red-green colour blindness: series differ in lightness as well as hue (blue, orange, and a
// dark and a light step of each), points also differ in shape, and the tower heat map is one
// hue from light to dark, so it reads in greyscale. The jet colours stand off the heat map's
// blue-grey by hue, and each outline runs over a white halo.

/** Series colours, in order of use (runs side by side, curves of one chart). */
export const SERIES_COLOURS = ['#1b5e9e', '#e08a1e', '#5a5a5a', '#7fb2e0', '#9c4f00', '#b5b5b5'] as const;
/** Point shapes beside the colours, so series differ without colour too. */
export const SERIES_SHAPES = ['circle', 'square', 'triangle-up', 'diamond', 'cross', 'triangle-down'] as const;
/** Dash patterns for lines, again so series differ without colour. */
export const SERIES_DASHES: readonly number[][] = [[], [6, 3], [2, 2], [8, 3, 2, 3], [1, 3], [10, 2]];

/** The tower heat map, light (low et) to dark (high et), one blue-grey hue. */
export const HEAT_COLOURS = ['#f3f5f8', '#c6d3e0', '#8ea6bf', '#56799c', '#2c4d70', '#0f243b'] as const;
/** Jet outlines: warm hues, green and violet, each far from the heat map's blue-grey; drawn over a white halo. */
export const JET_COLOURS = ['#e0531f', '#f2b134', '#c2187c', '#1aa37a', '#8c3fd1', '#ff8fb1', '#9acd32', '#8a4b08'] as const;

/** Budget and other reference lines. */
export const MARK_COLOUR = '#c2187c';
export const INK = '#1e2329';
export const FAINT = '#6b7280';

/** vega-lite config: our fonts, sizes and colours instead of the library's defaults. */
export const CHART_CONFIG = {
  background: '#ffffff',
  font: 'Helvetica, Arial, sans-serif',
  padding: 6,
  view: { stroke: '#d0d5db' },
  axis: {
    labelColor: INK,
    titleColor: INK,
    labelFontSize: 11,
    titleFontSize: 12,
    titleFontWeight: 'normal',
    gridColor: '#e7eaee',
    domainColor: '#8a939e',
    tickColor: '#8a939e',
  },
  legend: { labelFontSize: 11, titleFontSize: 11, titleFontWeight: 'normal', labelColor: INK, titleColor: INK, labelLimit: 480 },
  title: { fontSize: 13, fontWeight: 'bold', color: INK, anchor: 'start' },
  range: { category: [...SERIES_COLOURS] },
  line: { strokeWidth: 1.8 },
  point: { size: 36, filled: true },
} as const;
