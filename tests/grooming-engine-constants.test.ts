// The host's copies of grooming's numbers (host/clustering/grooming/engine-groomer.ts) against
// the engine's own, read from an instance of each build (assembly/shared-constants.ts).
import { describe, expect, it } from 'vitest';
import { engineImports, loadEngineModule } from '../host/clustering/engine-module.js';
import { GROOM_REGION, GROOM_SOFT_DROP, GROOM_TRIM } from '../host/clustering/grooming/engine-groomer.js';

function engineGlobals(debug: boolean): Record<string, number> {
  const module = loadEngineModule(debug);
  const instance = new WebAssembly.Instance(module, engineImports(module));
  const values: Record<string, number> = {};
  for (const [name, value] of Object.entries(instance.exports)) {
    if (value instanceof WebAssembly.Global) values[name] = value.value as number;
  }
  return values;
}

/** jetPt -> GROOM_REGION_JET_PT */
function exportName(region: string): string {
  return 'GROOM_REGION_' + region.replace(/[A-Z]/g, (letter) => '_' + letter).toUpperCase();
}

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
