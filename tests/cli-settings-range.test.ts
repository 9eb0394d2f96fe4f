// Algorithm settings from the command line (clustering-spec.md section 3: invR2 = 1 / (R * R)):
// a radius whose invR2 is not finite is refused as bad usage by every command that clusters,
// for the reference and the engine alike, instead of reaching a clusterer.

import { describe, expect, it } from 'vitest';
import { parseArgs, type CommandSpec } from '../host/cli/args.js';
import { UsageError } from '../host/errors.js';
import { CLUSTER_OPTIONS, clusterSettingsFrom } from '../host/cli/common-options.js';

const spec: CommandSpec = { name: 'cluster', summary: '', usage: '', positionals: { min: 0, max: 0 }, options: CLUSTER_OPTIONS };
const settingsFor = (...argv: string[]) => clusterSettingsFrom(parseArgs(spec, argv), 'cluster');

describe('the radius option', () => {
  it('refuses a radius so small that 1 / (R * R) is infinite', () => {
    expect(() => settingsFor('--radius', '1e-200')).toThrow(UsageError);
  });

  it('refuses a radius whose square underflows to a subnormal with an infinite inverse', () => {
    expect(() => settingsFor('--radius', '7e-155')).toThrow(/--radius/);
  });

  it('accepts the smallest radii whose 1 / (R * R) is finite', () => {
    expect(settingsFor('--radius', '7.5e-155').radius).toBe(7.5e-155);
  });

  it('accepts a huge radius (1 / (R * R) rounds to 0, a finite number)', () => {
    expect(settingsFor('--radius', '1e200').radius).toBe(1e200);
  });

  it('refuses a radius from a file header the same way', () => {
    const base = { p: -1, radius: 1e-160, ptMin: 0, threshold: 0, recombination: 'e' as const };
    expect(() => clusterSettingsFrom(parseArgs(spec, []), 'compare', base)).toThrow(UsageError);
  });
});
