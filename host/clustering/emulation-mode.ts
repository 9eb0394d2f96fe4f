// The value of --emulate: which precision emulation (emulate.ts) a clusterer runs.

import { UsageError } from '../errors.js';

export type EmulationMode = 'f32' | { lsbGeV: number };

/** Reads the value of --emulate: `f32` or `fixed:LSB` with LSB in GeV. */
export function parseEmulation(text: string): EmulationMode {
  const trimmed = text.trim();
  if (trimmed === 'f32') return 'f32';
  const match = /^fixed:(.+)$/.exec(trimmed);
  if (match) {
    const lsbGeV = Number(match[1]);
    if (match[1].trim() !== '' && Number.isFinite(lsbGeV) && lsbGeV > 0) return { lsbGeV };
    throw new UsageError(`--emulate fixed:LSB needs an LSB in GeV that is a finite number > 0, got ${JSON.stringify(match[1])}`);
  }
  throw new UsageError(`--emulate must be f32 or fixed:LSB (LSB in GeV, e.g. fixed:0.25), got ${JSON.stringify(text)}`);
}

/** The clusterer name for a mode: 'emulate-f32' or 'emulate-fixed-<LSB>'. */
export function emulationName(mode: EmulationMode): string {
  return mode === 'f32' ? 'emulate-f32' : `emulate-fixed-${mode.lsbGeV}`;
}
