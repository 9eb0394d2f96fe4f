// The host's copies of grooming's numbers (host/clustering/grooming/engine-groomer.ts) against
// the engine's own, read from an instance of each build (assembly/shared-constants.ts).
import { describe, expect, it } from 'vitest';
import { engineGlobals, regionExportName } from './support/engine-globals.js';
import { GROOM_REGION, GROOM_SOFT_DROP, GROOM_TRIM } from '../host/clustering/grooming/engine-groomer.js';

const exportName = (region: string): string => regionExportName('GROOM_REGION_', region);

describe.each([false, true])('the engine build (debug %s) and the groomer agree on', (debug) => {
  it('every grooming region id, and the host knows every one the engine numbers', () => {
    const engine = engineGlobals(debug);
    const engineRegions = Object.keys(engine).filter((name) => name.startsWith('GROOM_REGION_')).sort();
    expect(Object.keys(GROOM_REGION).map(exportName).sort()).toEqual(engineRegions);
    for (const [region, id] of Object.entries(GROOM_REGION)) expect(engine[exportName(region)], region).toBe(id);
  });

  it('the grooming modes', () => {
    const engine = engineGlobals(debug);
    expect([engine.GROOM_TRIM, engine.GROOM_SOFT_DROP]).toEqual([GROOM_TRIM, GROOM_SOFT_DROP]);
  });
});
