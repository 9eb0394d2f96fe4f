// The value of --emulate: which precision emulation (emulate.ts) a clusterer runs, or the
// window finder (window-finder.ts), a level-1 style candidate.

import { UsageError } from '../errors.js';
import { parseWindowEmulation, windowFinderName, type WindowSettings } from './window-finder.js';

export type EmulationMode = 'f32' | { lsbGeV: number } | { window: WindowSettings };

/** Reads the value of --emulate: `f32`, `fixed:LSB` with LSB in GeV, or `window:W:SEEDET`. */
export function parseEmulation(text: string): EmulationMode {
  const trimmed = text.trim();
  if (trimmed === 'f32') return 'f32';
  const window = parseWindowEmulation(trimmed);
  if (window !== null) return { window };
  const match = /^fixed:(.+)$/.exec(trimmed);
  if (match) {
    const lsbGeV = Number(match[1]);
    if (match[1].trim() !== '' && Number.isFinite(lsbGeV) && lsbGeV > 0) return { lsbGeV };
    throw new UsageError(`--emulate fixed:LSB needs an LSB in GeV that is a finite number > 0, got ${JSON.stringify(match[1])}`);
  }
  throw new UsageError(`--emulate must be f32, fixed:LSB (LSB in GeV, e.g. fixed:0.25) or window:W:SEEDET (e.g. window:9:5), got ${JSON.stringify(text)}`);
}

/** The clusterer name for a mode: 'emulate-f32', 'emulate-fixed-<LSB>' or 'window-<W>-<SEEDET>'. */
export function emulationName(mode: EmulationMode): string {
  if (mode === 'f32') return 'emulate-f32';
  return 'window' in mode ? windowFinderName(mode.window) : `emulate-fixed-${mode.lsbGeV}`;
}
