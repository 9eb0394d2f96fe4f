// The grooming settings' texts and limits (clustering-spec.md section 12): `--trim RSUB:FCUT` and
// `--softdrop ZCUT:BETA`. Each bad setting is one UsageError line naming the option and the value.

import { UsageError } from '../../errors.js';
import type { Grid, GroomingSettings, SoftDropSettings, TrimSettings } from '../../types.js';

/** subjet radii above this make no sense on any calorimeter grid and keep the engine's search rows small */
export const TRIM_MAX_RADIUS = 2;

/**
 * Grooming only on grids within |eta| <= this (as the pileup chain's areas): from |eta| of about
 * 19 on, cosh and sinh of a tower's eta are the same double, merged jets get infinite
 * rapidities and their distances NaN, which section 12's re-clustering does not define.
 */
export const GROOMING_MAX_ABS_ETA = 10;

export function checkGroomingGrid(grid: Grid, command: string): void {
  if (!(grid.etaMin >= -GROOMING_MAX_ABS_ETA && grid.etaMax <= GROOMING_MAX_ABS_ETA)) {
    throw new UsageError(`${command}: --trim and --softdrop need a grid within |eta| <= ${GROOMING_MAX_ABS_ETA}, got [${grid.etaMin}, ${grid.etaMax})`);
  }
}

function twoNumbers(text: string): [number, number] | null {
  const parts = text.split(':');
  if (parts.length !== 2 || parts.some((part) => part.trim() === '')) return null;
  const values = parts.map(Number);
  if (!values.every(Number.isFinite)) return null;
  return [values[0], values[1]];
}

/** `RSUB:FCUT`, e.g. 0.2:0.05 */
export function parseTrim(text: string, command: string): TrimSettings {
  const values = twoNumbers(text);
  if (values === null) throw new UsageError(`${command}: --trim needs RSUB:FCUT (subjet radius : pt fraction, e.g. 0.2:0.05), got ${JSON.stringify(text)}`);
  const trim = { subjetRadius: values[0], ptFraction: values[1] };
  checkTrim(trim, command);
  return trim;
}

/** `ZCUT:BETA`, e.g. 0.1:0 */
export function parseSoftDrop(text: string, command: string): SoftDropSettings {
  const values = twoNumbers(text);
  if (values === null) throw new UsageError(`${command}: --softdrop needs ZCUT:BETA (e.g. 0.1:0), got ${JSON.stringify(text)}`);
  const softDrop = { zCut: values[0], beta: values[1] };
  checkSoftDrop(softDrop, command);
  return softDrop;
}

export function checkTrim(trim: TrimSettings, command: string): void {
  if (!(trim.subjetRadius > 0 && trim.subjetRadius <= TRIM_MAX_RADIUS)) {
    throw new UsageError(`${command}: --trim needs a subjet radius RSUB in (0, ${TRIM_MAX_RADIUS}], got ${trim.subjetRadius}`);
  }
  if (!(trim.ptFraction >= 0 && Number.isFinite(trim.ptFraction))) {
    throw new UsageError(`${command}: --trim needs a pt fraction FCUT >= 0, got ${trim.ptFraction}`);
  }
}

export function checkSoftDrop(softDrop: SoftDropSettings, command: string): void {
  if (!(softDrop.zCut >= 0 && Number.isFinite(softDrop.zCut))) {
    throw new UsageError(`${command}: --softdrop needs ZCUT >= 0, got ${softDrop.zCut}`);
  }
  // BETA < 0 makes soft drop a tagger rather than a groomer (arXiv:1402.2657); only grooming here
  if (!(softDrop.beta >= 0 && Number.isFinite(softDrop.beta))) {
    throw new UsageError(`${command}: --softdrop needs BETA >= 0, got ${softDrop.beta}`);
  }
}

export function groomingIsOn(grooming: GroomingSettings | null | undefined): boolean {
  return !!grooming && (grooming.trim !== null || grooming.softDrop !== null);
}

/** The spec's names of the settings: `trim:RSUB:FCUT`, `softdrop:ZCUT:BETA`, joined by a space. */
export function describeGrooming(grooming: GroomingSettings): string {
  const parts: string[] = [];
  if (grooming.trim) parts.push(`trim:${grooming.trim.subjetRadius}:${grooming.trim.ptFraction}`);
  if (grooming.softDrop) parts.push(`softdrop:${grooming.softDrop.zCut}:${grooming.softDrop.beta}`);
  return parts.join(' ');
}
