// Seeded small events for the reference's tests: towers on random cells of a grid, with
// options for equal energies (ties), the phi seam and the eta edges. Invented data.

import type { Grid } from '../../host/types.js';

// the project's one seeded generator, under the name these tests know it by
export { makeRandom as seededRandom } from '../../host/random.js';

export interface SmallEventShape {
  towers: number;
  /** choose energies from a few fixed values so that many are equal */
  ties?: boolean;
  /** put towers only in the first and last few phi columns */
  seam?: boolean;
  /** put towers only in the first and last few eta rows */
  edges?: boolean;
  /** keep towers inside a window of this many cells around a random centre */
  window?: number;
}

export function smallEvent(grid: Grid, shape: SmallEventShape, random: () => number): { towerIndex: Int32Array; towerEt: Float64Array } {
  const used = new Set<number>();
  const indices: number[] = [];
  const energies: number[] = [];
  const centreEta = Math.floor(random() * grid.etaBins);
  const centrePhi = Math.floor(random() * grid.phiBins);
  const total = grid.etaBins * grid.phiBins;
  let guard = 0;
  while (indices.length < Math.min(shape.towers, total) && guard++ < 100_000) {
    let ieta: number;
    let iphi: number;
    if (shape.window) {
      ieta = centreEta + Math.floor((random() - 0.5) * shape.window);
      iphi = (centrePhi + Math.floor((random() - 0.5) * shape.window) + grid.phiBins) % grid.phiBins;
      if (ieta < 0 || ieta >= grid.etaBins) continue;
    } else {
      ieta = Math.floor(random() * grid.etaBins);
      iphi = Math.floor(random() * grid.phiBins);
    }
    if (shape.seam) iphi = random() < 0.5 ? Math.floor(random() * 3) : grid.phiBins - 1 - Math.floor(random() * 3);
    if (shape.edges) ieta = random() < 0.5 ? Math.floor(random() * 3) : grid.etaBins - 1 - Math.floor(random() * 3);
    const index = ieta * grid.phiBins + iphi;
    if (used.has(index)) continue;
    used.add(index);
    indices.push(index);
    energies.push(shape.ties ? [1, 2, 2, 5, 5, 5][Math.floor(random() * 6)] : 0.5 + 60 * random() ** 3);
  }
  return { towerIndex: Int32Array.from(indices), towerEt: Float64Array.from(energies) };
}
