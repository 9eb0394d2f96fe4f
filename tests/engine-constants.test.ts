// The host's copies of the engine's numbers (host/clustering/engine-module.ts, host/clustering/grid.ts)
// against the engine's own, read from an instance of each build (assembly/shared-constants.ts
// exports them as globals).
import { describe, expect, it } from 'vitest';
import { ENGINE_OK, ENGINE_INDEX_OUTSIDE, ENGINE_INDEX_REPEATED, REGION } from '../host/clustering/engine-module.js';
import { engineGlobals, regionExportName } from './support/engine-globals.js';
import { MIN_ET } from '../host/clustering/grid.js';

const exportName = (region: string): string => regionExportName('REGION_', region);

describe.each([false, true])('the engine build (debug %s) and the host agree on', (debug) => {
  it('the per-event status codes', () => {
    const engine = engineGlobals(debug);
    expect([engine.STATUS_OK, engine.STATUS_INDEX_OUTSIDE, engine.STATUS_INDEX_REPEATED])
      .toEqual([ENGINE_OK, ENGINE_INDEX_OUTSIDE, ENGINE_INDEX_REPEATED]);
  });

  it('every region id, and the host knows every region the engine numbers', () => {
    const engine = engineGlobals(debug);
    const engineRegions = Object.keys(engine).filter((name) => name.startsWith('REGION_')).sort();
    expect(Object.keys(REGION).map(exportName).sort()).toEqual(engineRegions);
    for (const [region, id] of Object.entries(REGION)) expect(engine[exportName(region)], region).toBe(id);
  });

  it('the smallest et that enters clustering', () => {
    expect(engineGlobals(debug).MIN_ET).toBe(MIN_ET);
  });
});
