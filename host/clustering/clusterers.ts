// Which clusterer a command uses: the engine, the reference, or a precision emulation.

import { UsageError } from '../errors.js';
import { makeEmulatedClusterer } from './emulate.js';
import type { EmulationMode } from './emulation-mode.js';
import { WasmClusterer } from './engine.js';
import { ReferenceClusterer } from './reference.js';
import { WindowFinder, windowSettingsOfName, type WindowEngineName } from './window-finder.js';
import type { ClusterSettings, Clusterer, Grid } from '../types.js';

export const ENGINE_NAMES = ['wasm', 'reference'] as const;
/** the engine, the reference, or the window finder (`jetlag run --engine window:W:SEEDET`) */
export type EngineName = (typeof ENGINE_NAMES)[number] | WindowEngineName;

export function parseEngineName(text: string, command: string): EngineName {
  if (!(ENGINE_NAMES as readonly string[]).includes(text)) {
    throw new UsageError(`${command}: --engine must be one of ${ENGINE_NAMES.join(', ')}, got ${JSON.stringify(text)}`);
  }
  return text as EngineName;
}

export function makeClusterer(engine: EngineName, grid: Grid, settings: ClusterSettings, emulation?: EmulationMode | null): Clusterer {
  if (emulation) return makeEmulatedClusterer(grid, settings, emulation);
  if (engine === 'reference') return new ReferenceClusterer(grid, settings);
  const window = windowSettingsOfName(engine);
  if (window !== null) return new WindowFinder(grid, settings, window);
  return new WasmClusterer(grid, settings);
}
