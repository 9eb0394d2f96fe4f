// The pileup options of `cluster`, `run` and `compare` (clustering-spec.md part two, sections
// 8-10), declared once:
//   --areas              ghost towers on every empty cell; jets report ghosts and area
//   --ghost-et GeV       et of each ghost (default 1e-100)
//   --rho patches:PE:PP | kt:RR    ρ per event
//   --subtract           ρ · area off every jet (needs --areas; ρ from patches 5:5 unless --rho)
//   --softkiller PE:PP   SoftKiller before everything else
// The limits that need the grid (patch sizes, the grid's eta range) are checked where the grid
// is known, by checkPileupSettings (clustering/pileup/settings.ts).

import type { OptionSpec, ParsedArgs } from './args.js';
import { parsePatchSize, parseRhoEstimator } from '../clustering/pileup/settings.js';
import { DEFAULT_PILEUP_SETTINGS, type PileupSettings } from '../types.js';

export const PILEUP_OPTIONS: OptionSpec[] = [
  { name: 'areas', kind: 'flag', description: 'jet areas on ghost cells: every cell without a tower gets a ghost tower; each jet reports its ghosts and area (spec section 8)' },
  { name: 'ghost-et', kind: 'number', argument: '<GeV>', description: `et of each ghost tower, in [1e-120, 1e-60] (default: ${DEFAULT_PILEUP_SETTINGS.ghostEt})` },
  { name: 'rho', kind: 'string', argument: '<patches:PE:PP|kt:RR>', description: 'background density ρ per event: the median density of patches of PE x PP towers, or of kt jets of radius RR with ghosts (default: patches:5:5 with --subtract, else none)' },
  { name: 'subtract', kind: 'flag', description: 'subtract ρ x area from each jet (needs --areas); jets left at or below 0 are removed and counted (spec section 9)' },
  { name: 'softkiller', kind: 'string', argument: '<PE:PP>', description: 'SoftKiller before clustering: remove every tower below the median over PE x PP patches of their hardest tower (spec section 10) (default: off)' },
];

/**
 * The pileup settings from the options, over `base` (the defaults, or a candidate header's);
 * not yet checked against the grid.
 */
export function pileupSettingsFrom(args: ParsedArgs, command: string, base: PileupSettings = DEFAULT_PILEUP_SETTINGS): PileupSettings {
  const pileup: PileupSettings = { ...base };
  if (args.values.areas === true) pileup.areas = true;
  if (args.values['ghost-et'] !== undefined) pileup.ghostEt = args.values['ghost-et'] as number;
  if (args.values.rho !== undefined) pileup.rho = parseRhoEstimator(args.values.rho as string, command);
  if (args.values.subtract === true) pileup.subtract = true;
  if (args.values.softkiller !== undefined) pileup.softKiller = parsePatchSize(args.values.softkiller as string, '--softkiller', command);
  return pileup;
}
