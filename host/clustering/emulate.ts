// Precision emulation: what a cheaper implementation of the same algorithm would lose.
//
//   'f32'            the spec's sequence (clustering-spec.md sections 2-6) with every input
//                    and every arithmetic result rounded to single precision (Math.fround
//                    after each operation; Math functions are evaluated in double on single
//                    inputs and their results rounded, as a correctly rounded float library
//                    would give). The same towers enter as for the reference (its double
//                    threshold rule); a tower whose squared et or weight leaves the single
//                    range (et below about 1e-19 GeV or above about 1.8e19 GeV) drops too.
//   {lsbGeV: L}      tower energies quantised to multiples of L GeV (round to nearest, ties
//                    towards +infinity, as Math.round does), towers quantised to 0 or below
//                    dropped, then the reference clusters in double; its threshold applies to
//                    the quantised energies, as hardware comparing counts would (so with a
//                    threshold on a multiple of L, towers up to L/2 above it round down onto
//                    it and drop: a bias `jetlag compare` shows). Trigger hardware stores
//                    tower energies as integers of a fixed least significant bit (fact of the
//                    trade, common practice).
//
// The modes are read from the command line in emulation-mode.ts; the clusterers are in
// quantised-clusterer.ts and single-precision-clusterer.ts.

import { UsageError } from '../errors.js';
import type { EmulationMode } from './emulation-mode.js';
import { QuantisedClusterer } from './quantised-clusterer.js';
import { SinglePrecisionClusterer } from './single-precision-clusterer.js';
import { WindowFinder } from './window-finder.js';
import type { ClusterSettings, Clusterer, Grid } from '../types.js';

export function makeEmulatedClusterer(grid: Grid, settings: ClusterSettings, mode: EmulationMode): Clusterer {
  if (mode === 'f32') return new SinglePrecisionClusterer(grid, settings);
  if ('window' in mode) return new WindowFinder(grid, settings, mode.window);
  if (!(Number.isFinite(mode.lsbGeV) && mode.lsbGeV > 0)) {
    throw new UsageError(`--emulate fixed:LSB needs an LSB in GeV that is a finite number > 0, got ${mode.lsbGeV}`);
  }
  return new QuantisedClusterer(grid, settings, mode.lsbGeV);
}
