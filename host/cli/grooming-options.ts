// The grooming options of `cluster`, `run` and `compare` (clustering-spec.md section 12),
// declared once:
//   --trim RSUB:FCUT        trimming of each reported jet (arXiv:0912.1342; common 0.2:0.05)
//   --softdrop ZCUT:BETA    soft drop of each reported jet (arXiv:1402.2657; common 0.1:0)

import type { OptionSpec, ParsedArgs } from './args.js';
import { parseSoftDrop, parseTrim } from '../clustering/grooming/settings.js';
import { NO_GROOMING, type GroomingSettings } from '../types.js';

export const GROOMING_OPTIONS: OptionSpec[] = [
  { name: 'trim', kind: 'string', argument: '<RSUB:FCUT>', description: 'trim each reported jet: re-cluster its towers with kt at R = RSUB, keep the subjets with pt >= FCUT x the jet\'s pt (spec section 12; common: 0.2:0.05) (default: off)' },
  { name: 'softdrop', kind: 'string', argument: '<ZCUT:BETA>', description: 'soft drop on each reported jet: Cambridge/Aachen tree, drop the softer branch while z <= ZCUT (dR/R)^BETA (spec section 12; common: 0.1:0) (default: off)' },
];

/** The grooming settings from the options, over `base` (none, or a candidate header's). */
export function groomingSettingsFrom(args: ParsedArgs, command: string, base: GroomingSettings = NO_GROOMING): GroomingSettings {
  const grooming: GroomingSettings = { ...base };
  if (args.values.trim !== undefined) grooming.trim = parseTrim(args.values.trim as string, command);
  if (args.values.softdrop !== undefined) grooming.softDrop = parseSoftDrop(args.values.softdrop as string, command);
  return grooming;
}
