// Options shared by several commands, declared once: the algorithm settings and the grid.

import { type OptionSpec, type ParsedArgs } from './args.js';
import { UsageError } from '../errors.js';
import { checkGrid } from '../clustering/grid.js';
import { DEFAULT_MAX_EVENT_GAP } from '../input/csv-event-builder.js';
import { DEFAULT_MAX_INFLATE_RATIO, DEFAULT_MAX_INFLATED_BYTES, type InflateLimits } from '../input/input-chunks.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS, type ClusterSettings, type Grid } from '../types.js';

export const ALGORITHM_EXPONENTS: Record<string, number> = {
  'anti-kt': -1,
  'cambridge-aachen': 0,
  kt: 1,
};

export const CLUSTER_OPTIONS: OptionSpec[] = [
  { name: 'algorithm', kind: 'string', argument: '<name>', description: 'anti-kt, cambridge-aachen or kt: a shorthand for --p (default: anti-kt)' },
  { name: 'p', kind: 'number', argument: '<exponent>', description: 'generalised-kt exponent, any finite value (default: -1)' },
  { name: 'radius', kind: 'number', argument: '<R>', description: 'jet radius R > 0 (default: 0.4)' },
  { name: 'ptmin', kind: 'number', argument: '<GeV>', description: 'report only jets with pt >= this (default: 0)' },
  { name: 'threshold', kind: 'number', argument: '<GeV>', description: 'towers with et <= this never enter, >= 0 (default: 0)' },
  { name: 'recombination', kind: 'string', argument: '<e|wta>', description: 'E-scheme (e) or winner-take-all (wta) (default: e)' },
];

export const GRID_OPTIONS: OptionSpec[] = [
  { name: 'eta-min', kind: 'number', argument: '<eta>', description: `lower edge of the grid in eta (default: ${DEFAULT_GRID.etaMin})` },
  { name: 'eta-max', kind: 'number', argument: '<eta>', description: `upper edge of the grid in eta (default: ${DEFAULT_GRID.etaMax})` },
  { name: 'eta-bins', kind: 'integer', argument: '<n>', description: `tower rows in eta (default: ${DEFAULT_GRID.etaBins})` },
  { name: 'phi-bins', kind: 'integer', argument: '<n>', description: `tower columns in phi (default: ${DEFAULT_GRID.phiBins})` },
];

/** every command that writes a file takes it: an existing regular file is refused without it */
export const FORCE_OPTION: OptionSpec = {
  name: 'force', kind: 'flag', description: 'replace output files that exist (devices, pipes and - are always written in place)',
};

/** commands that read CSV tower files take it (spec section 1, maxEventGap) */
export const MAX_EVENT_GAP_OPTION: OptionSpec = {
  name: 'max-event-gap', kind: 'integer', argument: '<n>',
  description: `CSV towers: largest jump of event numbers from one row to the next; a larger one makes the rest of the file unreadable (default: ${DEFAULT_MAX_EVENT_GAP})`,
};

/** --max-event-gap, checked: undefined when not given */
export function maxEventGapFrom(args: ParsedArgs, command: string): number | undefined {
  const value = args.values['max-event-gap'] as number | undefined;
  if (value !== undefined && !(Number.isSafeInteger(value) && value >= 1)) {
    throw new UsageError(`${command}: --max-event-gap must be an integer >= 1, got ${value}`);
  }
  return value;
}

/** commands that read gzip input take them: caps on inflating (input-chunks.ts) */
export const INFLATE_OPTIONS: OptionSpec[] = [
  { name: 'max-inflated-bytes', kind: 'integer', argument: '<n>', description: `gzip input: most bytes it may inflate to (default: ${DEFAULT_MAX_INFLATED_BYTES}, 64 GiB)` },
  { name: 'max-inflate-ratio', kind: 'integer', argument: '<n>', description: `gzip input: most inflated bytes per compressed byte, judged past 64 MiB (default: ${DEFAULT_MAX_INFLATE_RATIO})` },
];

/** --max-inflated-bytes and --max-inflate-ratio, checked: undefined when neither is given */
export function inflateLimitsFrom(args: ParsedArgs, command: string): InflateLimits | undefined {
  const maxInflatedBytes = args.values['max-inflated-bytes'] as number | undefined;
  const maxInflateRatio = args.values['max-inflate-ratio'] as number | undefined;
  for (const [name, value] of [['max-inflated-bytes', maxInflatedBytes], ['max-inflate-ratio', maxInflateRatio]] as const) {
    if (value !== undefined && !(Number.isSafeInteger(value) && value >= 1)) {
      throw new UsageError(`${command}: --${name} must be an integer >= 1, got ${value}`);
    }
  }
  if (maxInflatedBytes === undefined && maxInflateRatio === undefined) return undefined;
  return { maxInflatedBytes, maxInflateRatio };
}

/** Algorithm settings from the options, starting from `base` (defaults or a file header). */
export function clusterSettingsFrom(args: ParsedArgs, command: string, base: ClusterSettings = DEFAULT_SETTINGS): ClusterSettings {
  const settings: ClusterSettings = { ...base };
  const algorithm = args.values.algorithm as string | undefined;
  const p = args.values.p as number | undefined;
  if (algorithm !== undefined) {
    if (!(algorithm in ALGORITHM_EXPONENTS)) {
      throw new UsageError(`${command}: --algorithm must be one of ${Object.keys(ALGORITHM_EXPONENTS).join(', ')}, got ${JSON.stringify(algorithm)}`);
    }
    if (p !== undefined && p !== ALGORITHM_EXPONENTS[algorithm]) {
      throw new UsageError(`${command}: --algorithm ${algorithm} means p = ${ALGORITHM_EXPONENTS[algorithm]}, but --p ${p} was given`);
    }
    settings.p = ALGORITHM_EXPONENTS[algorithm];
  }
  if (p !== undefined) settings.p = p;
  if (args.values.radius !== undefined) settings.radius = args.values.radius as number;
  if (args.values.ptmin !== undefined) settings.ptMin = args.values.ptmin as number;
  if (args.values.threshold !== undefined) settings.threshold = args.values.threshold as number;
  const recombination = args.values.recombination as string | undefined;
  if (recombination !== undefined) {
    if (recombination !== 'e' && recombination !== 'wta') {
      throw new UsageError(`${command}: --recombination must be e or wta, got ${JSON.stringify(recombination)}`);
    }
    settings.recombination = recombination;
  }
  checkSettings(settings, command);
  return settings;
}

export function checkSettings(settings: ClusterSettings, command: string): void {
  // invR2 = 1 / (R * R) (spec section 3) must be finite: below about 7.5e-155 it is infinite,
  // every measure infinite or NaN, and the engine refuses such an R; one rule for every engine
  const radius = settings.radius;
  if (!(radius > 0) || !Number.isFinite(radius) || !Number.isFinite(1 / (radius * radius))) {
    throw new UsageError(`${command}: --radius must be a positive finite number with 1 / R² finite (R above about 7.5e-155), got ${radius}`);
  }
  if (!Number.isFinite(settings.p)) throw new UsageError(`${command}: --p must be finite, got ${settings.p}`);
  if (!(settings.ptMin >= 0)) throw new UsageError(`${command}: --ptmin must be >= 0, got ${settings.ptMin}`);
  if (!(settings.threshold >= 0) || !Number.isFinite(settings.threshold)) throw new UsageError(`${command}: --threshold must be a finite number >= 0, got ${settings.threshold}`);
}

export function gridFrom(args: ParsedArgs, command: string): Grid {
  const grid: Grid = {
    etaMin: (args.values['eta-min'] as number | undefined) ?? DEFAULT_GRID.etaMin,
    etaMax: (args.values['eta-max'] as number | undefined) ?? DEFAULT_GRID.etaMax,
    etaBins: (args.values['eta-bins'] as number | undefined) ?? DEFAULT_GRID.etaBins,
    phiBins: (args.values['phi-bins'] as number | undefined) ?? DEFAULT_GRID.phiBins,
  };
  try {
    checkGrid(grid, command);
  } catch (error) {
    throw new UsageError((error as Error).message);
  }
  return grid;
}

export function hasGridOptions(args: ParsedArgs): boolean {
  return GRID_OPTIONS.some((o) => args.values[o.name] !== undefined);
}
