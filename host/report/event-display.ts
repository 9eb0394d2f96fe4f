// The event display: one event's η–φ tower grid as a heat map of tower et (log colour scale),
// each jet outlined in its own colour around its towers (or, for a jet that names no towers,
// a circle of radius R about its axis), its axis marked and labelled with its pt. Several
// panels side by side share the colour scale (a compare: reference and candidate).
//
// φ is periodic. The φ axis runs past [0, 2π) on both sides by the largest overhang of any jet,
// towers near the seam repeated there (shaded band), and every jet is drawn at φ, φ - 2π and
// φ + 2π, clipped to the plot: a jet across the seam is drawn whole at both edges.
//
// Each jet's outline is its own layer named jet_outline_<panel>_<k>, which vega turns into an
// SVG group of class jet_outline_<panel>_<k>_marks; the page's tests count them.

import { chartFigure, type ChartSpec } from './render-chart.js';
import { FAINT, HEAT_COLOURS, INK, JET_COLOURS } from './theme.js';
import type { Grid } from '../types.js';

const TWO_PI = 2 * Math.PI;

export interface DisplayJet {
  pt: number;
  eta: number;
  /** in [0, 2π) */
  phi: number;
  /** flat tower indices of its constituents; null when the jet names none */
  towers: Int32Array | null;
}

export interface DisplayPanel {
  title: string;
  jets: DisplayJet[];
  /** total jets of the panel before the display's limit (the caption says so when larger) */
  jetsTotal: number;
}

export interface DisplayEvent {
  event: number;
  /** why this event: 'slowest of the run', 'worst of the compare', 'chosen with --display' */
  why: string;
  grid: Grid;
  radius: number;
  towerIndex: Int32Array;
  towerEt: Float64Array;
  panels: DisplayPanel[];
}

/** φ - reference brought into (-π, π] */
function wrapDelta(delta: number): number {
  let d = delta % TWO_PI;
  if (d > Math.PI) d -= TWO_PI;
  if (d <= -Math.PI) d += TWO_PI;
  return d;
}

interface Segment { x: number; y: number; x2: number; y2: number }

/** The boundary of a jet's towers: tower sides whose neighbour is not in the jet, φ unwrapped about the axis. */
function outlineSegments(jet: DisplayJet, grid: Grid): Segment[] {
  const { etaMin, etaMax, etaBins, phiBins } = grid;
  const dEta = (etaMax - etaMin) / etaBins;
  const dPhi = TWO_PI / phiBins;
  const inJet = new Set<number>(jet.towers ?? []);
  const segments: Segment[] = [];
  for (const index of inJet) {
    const ieta = Math.floor(index / phiBins);
    const iphi = index % phiBins;
    const x0 = etaMin + ieta * dEta;
    const x1 = x0 + dEta;
    const centre = jet.phi + wrapDelta((iphi + 0.5) * dPhi - jet.phi);
    const y0 = centre - dPhi / 2;
    const y1 = centre + dPhi / 2;
    const has = (e: number, p: number) => e >= 0 && e < etaBins && inJet.has(e * phiBins + ((p % phiBins) + phiBins) % phiBins);
    if (!has(ieta - 1, iphi)) segments.push({ x: x0, y: y0, x2: x0, y2: y1 });
    if (!has(ieta + 1, iphi)) segments.push({ x: x1, y: y0, x2: x1, y2: y1 });
    if (!has(ieta, iphi - 1)) segments.push({ x: x0, y: y0, x2: x1, y2: y0 });
    if (!has(ieta, iphi + 1)) segments.push({ x: x0, y: y1, x2: x1, y2: y1 });
  }
  return segments;
}

/** A circle of radius R about the axis, as segments (for jets that name no towers). */
function circleSegments(jet: DisplayJet, radius: number): Segment[] {
  const segments: Segment[] = [];
  const steps = 36;
  for (let k = 0; k < steps; k++) {
    const a = (TWO_PI * k) / steps;
    const b = (TWO_PI * (k + 1)) / steps;
    segments.push({ x: jet.eta + radius * Math.cos(a), y: jet.phi + radius * Math.sin(a), x2: jet.eta + radius * Math.cos(b), y2: jet.phi + radius * Math.sin(b) });
  }
  return segments;
}

function overhang(segments: Segment[]): number {
  let over = 0;
  for (const s of segments) over = Math.max(over, -Math.min(s.y, s.y2), Math.max(s.y, s.y2) - TWO_PI);
  return over;
}

/** The outlines of every panel's jets, and the φ margin that shows each of them whole. */
function outlinesOf(display: DisplayEvent): { outlines: Segment[][][]; margin: number } {
  let margin = 0;
  const outlines = display.panels.map((panel) => panel.jets.map((jet) => {
    const segments = jet.towers !== null ? outlineSegments(jet, display.grid) : circleSegments(jet, display.radius);
    margin = Math.max(margin, overhang(segments));
    return segments;
  }));
  return { outlines, margin: margin > 0 ? Math.min(Math.PI, margin + 0.05) : 0 };
}

function towerRows(display: DisplayEvent, margin: number): object[] {
  const { etaMin, etaMax, etaBins, phiBins } = display.grid;
  const dEta = (etaMax - etaMin) / etaBins;
  const dPhi = TWO_PI / phiBins;
  const rows: object[] = [];
  for (let k = 0; k < display.towerIndex.length; k++) {
    const et = display.towerEt[k];
    if (!(et > 0)) continue;
    const index = display.towerIndex[k];
    const eta = etaMin + Math.floor(index / phiBins) * dEta;
    const phi = (index % phiBins) * dPhi;
    for (const shift of [0, -TWO_PI, TWO_PI]) {
      const low = phi + shift;
      if (low + dPhi <= -margin || low >= TWO_PI + margin) continue;
      rows.push({ eta, eta2: eta + dEta, phi: low, phi2: low + dPhi, et });
    }
  }
  return rows;
}

function panelSpec(display: DisplayEvent, panelIndex: number, panel: DisplayPanel, segments: Segment[][], margin: number, towers: object[], etDomain: [number, number]): object {
  const { etaMin, etaMax } = display.grid;
  const x = { type: 'quantitative', scale: { domain: [etaMin, etaMax], nice: false, zero: false }, axis: { title: 'η (pseudorapidity)' } };
  const y = { type: 'quantitative', scale: { domain: [-margin, TWO_PI + margin], nice: false, zero: false }, axis: { title: 'φ [rad]', values: [0, Math.PI / 2, Math.PI, 1.5 * Math.PI, TWO_PI], format: '.2f' } };
  const layers: object[] = [
    {
      data: { values: towers },
      mark: { type: 'rect', clip: true },
      encoding: {
        x: { ...x, field: 'eta' }, x2: { field: 'eta2' }, y: { ...y, field: 'phi' }, y2: { field: 'phi2' },
        color: { field: 'et', type: 'quantitative', scale: { type: 'log', domain: etDomain, range: [...HEAT_COLOURS], interpolate: 'lab' }, legend: { title: 'tower et [GeV] (log)', orient: 'right', gradientLength: 180, format: '.2~g' } },
      },
    },
  ];
  if (margin > 0) {
    layers.push({
      data: { values: [{ a: -margin, b: 0 }, { a: TWO_PI, b: TWO_PI + margin }] },
      mark: { type: 'rect', color: '#000000', opacity: 0.07, clip: true },
      encoding: { y: { ...y, field: 'a' }, y2: { field: 'b' }, x: { datum: etaMin, ...x }, x2: { datum: etaMax } },
    });
    layers.push({
      data: { values: [{ seam: 0 }, { seam: TWO_PI }] },
      mark: { type: 'rule', color: FAINT, strokeDash: [3, 3], clip: true },
      encoding: { y: { ...y, field: 'seam' } },
    });
  }
  const copiesOf = (k: number) => {
    const copies: object[] = [];
    for (const shift of [0, -TWO_PI, TWO_PI]) {
      for (const s of segments[k]) {
        if (Math.max(s.y, s.y2) + shift < -margin - 1e-9 || Math.min(s.y, s.y2) + shift > TWO_PI + margin + 1e-9) continue;
        copies.push({ x: s.x, x2: s.x2, y: s.y + shift, y2: s.y2 + shift });
      }
    }
    return copies;
  };
  const outlines = panel.jets.map((_, k) => copiesOf(k));
  const segmentEncoding = { x: { ...x, field: 'x' }, x2: { field: 'x2' }, y: { ...y, field: 'y' }, y2: { field: 'y2' } };
  // one white halo under all outlines, so they stand out on dark towers too
  layers.push({ data: { values: outlines.flat() }, mark: { type: 'rule', color: '#ffffff', strokeWidth: 4.5, strokeCap: 'square', clip: true }, encoding: segmentEncoding });
  outlines.forEach((copies, k) => {
    layers.push({
      name: `jet_outline_${panelIndex}_${k}`,
      data: { values: copies },
      mark: { type: 'rule', color: JET_COLOURS[k % JET_COLOURS.length], strokeWidth: 2.2, strokeCap: 'square', clip: true },
      encoding: segmentEncoding,
    });
  });
  const axes = panel.jets.flatMap((jet, k) => [0, -TWO_PI, TWO_PI]
    .filter((shift) => jet.phi + shift >= -margin && jet.phi + shift <= TWO_PI + margin)
    .map((shift) => ({ eta: jet.eta, phi: jet.phi + shift, jet: `j${k + 1}`, label: `j${k + 1} ${jet.pt.toFixed(1)} GeV`, colour: JET_COLOURS[k % JET_COLOURS.length] })));
  if (axes.length > 0) {
    layers.push({
      data: { values: axes },
      mark: { type: 'point', shape: 'cross', size: 90, filled: true, stroke: '#ffffff', strokeWidth: 0.8, clip: true },
      encoding: { x: { ...x, field: 'eta' }, y: { ...y, field: 'phi' }, fill: { field: 'colour', type: 'nominal', scale: null, legend: null } },
    });
    const textEncoding = { x: { ...x, field: 'eta' }, y: { ...y, field: 'phi' }, text: { field: 'label' } };
    // labels right of the axis, or left of it near the right edge; a white halo under each
    // (vega has no paint order: a second text below does it)
    const rightEdge = etaMax - 0.3 * (etaMax - etaMin);
    for (const [values, align, dx] of [[axes.filter((a) => a.eta < rightEdge), 'left', 7], [axes.filter((a) => a.eta >= rightEdge), 'right', -7]] as const) {
      if (values.length === 0) continue;
      const text = { type: 'text', align, dx, dy: -7, fontSize: 11, fontWeight: 'bold', clip: true };
      layers.push({ data: { values }, mark: { ...text, fill: '#ffffff', stroke: '#ffffff', strokeWidth: 3, strokeJoin: 'round' }, encoding: textEncoding });
      layers.push({ data: { values }, mark: { ...text, fill: INK }, encoding: textEncoding });
    }
  }
  const pixelsPerUnit = display.panels.length > 1 ? 66 : 84;
  return {
    title: { text: panel.title, subtitle: panel.jets.length < panel.jetsTotal ? `the ${panel.jets.length} hardest of ${panel.jetsTotal} jets` : `${panel.jets.length} jets` },
    width: Math.round((etaMax - etaMin) * pixelsPerUnit),
    height: Math.round((TWO_PI + 2 * margin) * pixelsPerUnit),
    layer: layers,
  };
}

/** The display as a figure; data-jets on the figure lists each panel's jets shown. */
export async function eventDisplayFigure(display: DisplayEvent): Promise<string> {
  const { outlines, margin } = outlinesOf(display);
  const towers = towerRows(display, margin);
  let low = Infinity;
  let high = 0;
  for (const et of display.towerEt) if (et > 0) { low = Math.min(low, et); high = Math.max(high, et); }
  const etDomain: [number, number] = low === Infinity ? [0.1, 1] : [low, Math.max(high, low * 10)];
  const spec = {
    title: `Event ${display.event} (${display.why})`,
    hconcat: display.panels.map((panel, k) => panelSpec(display, k, panel, outlines[k], margin, towers, etDomain)),
    resolve: { scale: { color: 'shared' } },
  };
  const figure = await chartFigure('event-display', spec as unknown as ChartSpec,
    `Towers of event ${display.event} coloured by et on a log scale; each jet's towers outlined in its own colour (a circle of radius R = ${display.radius} where a jet names no towers), its axis marked with a cross and its pt. ` +
    (margin > 0 ? 'φ is periodic: the shaded bands repeat the towers across the seam at 0 = 2π, so a jet across it is drawn whole on both edges.' : 'φ is periodic (0 = 2π).'));
  const jets = display.panels.map((panel) => panel.jets.length).join(' ');
  return figure.replace('<figure class="chart"', `<figure class="chart event-display" data-jets="${jets}"`);
}
