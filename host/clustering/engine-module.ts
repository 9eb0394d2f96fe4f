// Loading the WebAssembly engine and the numbers both sides share: the compiled module, its
// imports, its region ids and statuses, and the grid tables written into its memory (engine.ts
// has the clusterer).

import { readFileSync, existsSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { GridTables } from './grid.js';
import type { ClusterSettings } from '../types.js';

// Copies of the engine's numbers (assembly/shared-constants.ts); tests/engine-constants.test.ts
// reads the engine's from an instance and checks that these agree.

/** per-event status of a batch */
export const ENGINE_OK = 0;
export const ENGINE_INDEX_OUTSIDE = -1;
export const ENGINE_INDEX_REPEATED = -2;

/** region ids of assembly/index.ts region() */
export const REGION = {
  etaCentre: 0, sinhEta: 1, coshEta: 2, phiCentre: 3, cosPhi: 4, sinPhi: 5,
  inIndex: 6, inEt: 7, inStart: 8,
  outJetStart: 9, outNs: 10, outClustered: 11, outStatus: 12,
  outPx: 13, outPy: 14, outPz: 15, outE: 16, outPt: 17, outY: 18, outPhi: 19, outMass: 20,
  outTowerCount: 21, outTowerStart: 22, outTowers: 23, outJetIndex: 24,
} as const;

export interface EngineExports {
  memory: WebAssembly.Memory;
  setup(etaBins: number, phiBins: number, towerCapacity: number, eventCapacity: number): number;
  configureEngine(p: number, radius: number, ptMin: number, threshold: number, wta: number, etaMin: number, etaMax: number): number;
  region(id: number): number;
  clusterBatch(eventCount: number, withTowers: number): number;
  neighbourTable(): number;
}

/** The package root: the directory above this file holding asconfig.json (host/clustering/ or dist/host/clustering/). */
function packageRoot(): string {
  let dir = dirname(fileURLToPath(import.meta.url));
  for (let up = 0; up < 4; up++) {
    if (existsSync(join(dir, 'asconfig.json'))) return dir;
    dir = dirname(dir);
  }
  throw new Error(`engine: no asconfig.json above ${fileURLToPath(import.meta.url)}; run npm run build`);
}

export function engineWasmPath(debug = false): string {
  return join(packageRoot(), 'build', debug ? 'jetlag.debug.wasm' : 'jetlag.wasm');
}

const compiled = new Map<boolean, WebAssembly.Module>();

/** The compiled module, once per thread (release or debug build). */
export function loadEngineModule(debug = false): WebAssembly.Module {
  let module = compiled.get(debug);
  if (!module) {
    const path = engineWasmPath(debug);
    if (!existsSync(path)) throw new Error(`engine: ${path} is missing; run npm run build`);
    module = new WebAssembly.Module(readFileSync(path));
    compiled.set(debug, module);
  }
  return module;
}

/** The host functions a build of the engine imports: its clock, its assertion trap, Math. */
export function engineImports(module: WebAssembly.Module): WebAssembly.Imports {
  const env: Record<string, WebAssembly.ImportValue> = {};
  for (const entry of WebAssembly.Module.imports(module)) {
    if (entry.name === 'clock.nowNs') env[entry.name] = () => performance.now() * 1e6;
    else if (entry.name === 'abort') {
      env[entry.name] = (_message: number, _file: number, line: number, column: number) => {
        throw new Error(`engine: assertion failed at line ${line}:${column} (instance is no longer usable)`);
      };
    } else if (entry.name.startsWith('Math.')) {
      const fn = (Math as unknown as Record<string, unknown>)[entry.name.slice(5)];
      if (typeof fn !== 'function') throw new Error(`engine: unknown import ${entry.name}`);
      env[entry.name] = fn as WebAssembly.ImportValue;
    } else throw new Error(`engine: unknown import ${entry.module}.${entry.name}`);
  }
  return { env };
}

/**
 * Copies the grid's centres and the host's cos/sin/sinh/cosh tables into the module's memory,
 * so tower four-vectors are built from exactly the doubles the reference uses (spec section 2).
 */
export function writeGridTables(memory: WebAssembly.Memory, region: (id: number) => number, tables: GridTables): void {
  const { etaBins, phiBins } = tables.grid;
  const put = (id: number, values: Float64Array, length: number) => {
    new Float64Array(memory.buffer, region(id), length).set(values);
  };
  put(REGION.etaCentre, tables.etaCentre, etaBins);
  put(REGION.sinhEta, tables.sinhEta, etaBins);
  put(REGION.coshEta, tables.coshEta, etaBins);
  put(REGION.phiCentre, tables.phiCentre, phiBins);
  put(REGION.cosPhi, tables.cosPhi, phiBins);
  put(REGION.sinPhi, tables.sinPhi, phiBins);
}

/** What an engine instance is made for: the generalised-kt settings configureEngine() takes. */
export interface EngineInstanceSettings {
  p: number;
  radius: number;
  ptMin: number;
  threshold: number;
  /** 1 for winner-take-all recombination, else 0 */
  wta: number;
}

/**
 * A new instance of the module, its memory reserved for `towerCapacity` towers and
 * `eventCapacity` events, the grid tables written and the search configured; a one-line error
 * when memory cannot be had. `purpose` names the use in that error ("" or e.g. "grooming on ").
 */
export function startEngineInstance<T extends Pick<EngineExports, 'memory' | 'setup' | 'region' | 'configureEngine'>>(
  module: WebAssembly.Module, tables: GridTables, towerCapacity: number, eventCapacity: number,
  settings: EngineInstanceSettings, purpose = '',
): T {
  const { grid, towerTotal } = tables;
  const e = new WebAssembly.Instance(module, engineImports(module)).exports as unknown as T;
  if (!e.setup(grid.etaBins, grid.phiBins, towerCapacity, eventCapacity)) {
    throw new Error(`engine: cannot reserve memory for ${purpose}a grid of ${towerTotal} towers`);
  }
  writeGridTables(e.memory, (id) => e.region(id), tables);
  if (!e.configureEngine(settings.p, settings.radius, settings.ptMin, settings.threshold, settings.wta, grid.etaMin, grid.etaMax)) {
    throw new Error(`engine: cannot reserve memory for the search rows of R = ${settings.radius} on a grid of ${towerTotal} towers`);
  }
  return e;
}

/** Throws a one-line error naming the setting when the engine cannot use it. */
export function checkEngineSettings(settings: ClusterSettings): void {
  const { p, radius, ptMin, threshold, recombination } = settings;
  if (!Number.isFinite(p)) throw new Error(`settings.p must be a finite number, got ${p}`);
  if (!(Number.isFinite(radius) && radius > 0 && Number.isFinite(1 / (radius * radius)) && radius * radius > 0)) {
    throw new Error(`settings.radius must be a positive finite number whose square is a normal double, got ${radius}`);
  }
  if (Number.isNaN(ptMin)) throw new Error(`settings.ptMin must be a number, got ${ptMin}`);
  if (!(threshold >= 0)) throw new Error(`settings.threshold must be a number >= 0, got ${threshold}`);
  if (recombination !== 'e' && recombination !== 'wta') {
    throw new Error(`settings.recombination must be 'e' or 'wta', got ${String(recombination)}`);
  }
}

export function describeStatus(status: number): string {
  if (status === ENGINE_INDEX_OUTSIDE) return 'a tower index lies outside the grid';
  if (status === ENGINE_INDEX_REPEATED) return 'a tower index appears twice';
  return status === ENGINE_OK ? 'ok' : `unknown status ${status}`;
}
