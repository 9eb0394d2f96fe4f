// The numbers an engine build exports as globals (assembly/shared-constants.ts and friends),
// read from a fresh instance, for tests that hold the host's copies against them.
import { engineImports, loadEngineModule } from '../../host/clustering/engine-module.js';

export function engineGlobals(debug: boolean): Record<string, number> {
  const module = loadEngineModule(debug);
  const instance = new WebAssembly.Instance(module, engineImports(module));
  const values: Record<string, number> = {};
  for (const [name, value] of Object.entries(instance.exports)) {
    if (value instanceof WebAssembly.Global) values[name] = value.value as number;
  }
  return values;
}

/** A region's name in the engine's exports: etaCentre -> PREFIX_ETA_CENTRE. */
export function regionExportName(prefix: string, region: string): string {
  return prefix + region.replace(/[A-Z]/g, (letter) => '_' + letter).toUpperCase();
}
