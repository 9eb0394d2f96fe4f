// The event display draws a jet across the φ seam (0 = 2π) whole on both edges, and a jet away
// from it once. Read from the drawn SVG: vega labels each rule with its data coordinates.

import { describe, expect, it } from 'vitest';
import { eventDisplayFigure } from '../host/report/event-display.js';
import { DEFAULT_GRID } from '../host/types.js';

const PHI_BINS = DEFAULT_GRID.phiBins;
const D_PHI = (2 * Math.PI) / PHI_BINS;
const ETA_ROW = 25;

/** [y, y2] in radians of every outline segment of the panel's jet k */
async function outlineSegmentsPhi(jetTowersIphi: number[], jetPhi: number): Promise<[number, number][]> {
  const towerIndex = Int32Array.from(jetTowersIphi, (iphi) => ETA_ROW * PHI_BINS + iphi);
  const figure = await eventDisplayFigure({
    event: 7, why: 'a test', grid: DEFAULT_GRID, radius: 0.4,
    towerIndex, towerEt: Float64Array.from(jetTowersIphi, () => 25),
    panels: [{ title: 'jets', jets: [{ pt: 50, eta: 0.05, phi: jetPhi, towers: towerIndex }], jetsTotal: 1 }],
  });
  const group = figure.match(/<g class="[^"]*jet_outline_0_0_marks"[^>]*>(.*?)<\/g>/s);
  expect(group).not.toBeNull();
  // vega writes negative numbers with the minus sign U+2212
  const labels = group![1].replace(/\u2212/g, '-');
  return [...labels.matchAll(/aria-label="x: [^;]*; y: ([-0-9.e]+); x2: [^;]*; y2: ([-0-9.e]+)"/g)].map((m) => [Number(m[1]), Number(m[2])]);
}

function extent(segments: [number, number][]): [number, number] {
  const values = segments.flat();
  return [Math.min(...values), Math.max(...values)];
}

describe('the event display at the φ seam', () => {
  it('draws a jet of towers at iphi 63 and 0 whole at the bottom edge and at the top edge', async () => {
    const segments = await outlineSegmentsPhi([0, PHI_BINS - 1], 2 * Math.PI - 0.001);
    const bottom = segments.filter(([y, y2]) => Math.max(y, y2) < Math.PI);
    const top = segments.filter(([y, y2]) => Math.min(y, y2) > Math.PI);
    // two towers stacked in φ: 6 sides each time (2 left, 2 right, 1 above, 1 below)
    expect([bottom.length, top.length]).toEqual([6, 6]);
    const [bottomLow, bottomHigh] = extent(bottom);
    const [topLow, topHigh] = extent(top);
    expect(bottomLow).toBeCloseTo(-D_PHI, 2);
    expect(bottomHigh).toBeCloseTo(D_PHI, 2);
    expect(topLow).toBeCloseTo(2 * Math.PI - D_PHI, 2);
    expect(topHigh).toBeCloseTo(2 * Math.PI + D_PHI, 2);
  });

  it('draws a jet away from the seam once', async () => {
    const segments = await outlineSegmentsPhi([30, 31], 31 * D_PHI);
    expect(segments).toHaveLength(6);
    const [low, high] = extent(segments);
    expect(low).toBeCloseTo(30 * D_PHI, 2);
    expect(high).toBeCloseTo(32 * D_PHI, 2);
  });
});
