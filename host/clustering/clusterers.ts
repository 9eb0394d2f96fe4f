// Which clusterer a command uses: the engine, the reference, or a precision emulation.

import { UsageError } from '../errors.js';
import { makeEmulatedClusterer } from './emulate.js';
import type { EmulationMode } from './emulation-mode.js';
import { WasmClusterer } from './engine.js';
import { ReferenceClusterer } from './reference.js';
import { WindowFinder, windowSettingsOfName, type WindowEngineName } from './window-finder.js';
import { PileupReferenceClusterer } from './pileup/chain.js';
import { EnginePileupClusterer } from './pileup/engine-chain.js';
import { checkPileupSettings, pileupStepsOn } from './pileup/settings.js';
import { SoftKillerFirst } from './pileup/softkiller-first.js';
import { GroomingClusterer } from './grooming/groomer.js';
import { EngineGroomer } from './grooming/engine-groomer.js';
import { ReferenceGroomer } from './grooming/reference-groomer.js';
import { checkGroomingGrid, groomingIsOn } from './grooming/settings.js';
import type { ClusterSettings, Clusterer, Grid, GroomingSettings, PileupSettings } from '../types.js';

export const ENGINE_NAMES = ['wasm', 'reference'] as const;
/** the engine, the reference, or the window finder (`jetlag run --engine window:W:SEEDET`) */
export type EngineName = (typeof ENGINE_NAMES)[number] | WindowEngineName;

export function parseEngineName(text: string, command: string): EngineName {
  if (!(ENGINE_NAMES as readonly string[]).includes(text)) {
    throw new UsageError(`${command}: --engine must be one of ${ENGINE_NAMES.join(', ')}, got ${JSON.stringify(text)}`);
  }
  return text as EngineName;
}

/**
 * The clusterer a command runs. With a pileup step on (`pileup`, spec part two), the engine or
 * the reference runs the whole chain; the window finder takes SoftKiller only (spec section 11),
 * the emulations none of them (a usage error naming `command`).
 */
export function makeClusterer(
  engine: EngineName, grid: Grid, settings: ClusterSettings, emulation?: EmulationMode | null,
  pileup?: PileupSettings | null, command = 'cluster', grooming?: GroomingSettings | null,
): Clusterer {
  if (groomingIsOn(grooming)) {
    refuseGrooming(engine, emulation ?? null, command);
    checkGroomingGrid(grid, command);
    const base = makeClusterer(engine, grid, settings, emulation, pileup, command);
    const groomer = engine === 'reference' ? new ReferenceGroomer(grid, grooming!, settings.radius) : new EngineGroomer(grid, grooming!, settings.radius);
    return new GroomingClusterer(base, groomer);
  }
  if (pileupStepsOn(pileup)) {
    const window = windowOf(engine, emulation ?? null);
    if (window !== null && pileup.softKiller !== null && !pileup.areas && pileup.rho === null && !pileup.subtract) {
      checkPileupSettings(grid, settings, pileup, command);
      return new SoftKillerFirst(grid, pileup.softKiller, new WindowFinder(grid, settings, window));
    }
    refusePileupSteps(engine, emulation ?? null, command);
    return engine === 'reference'
      ? new PileupReferenceClusterer(grid, settings, pileup, command)
      : new EnginePileupClusterer(grid, settings, pileup, command);
  }
  if (emulation) return makeEmulatedClusterer(grid, settings, emulation);
  if (engine === 'reference') return new ReferenceClusterer(grid, settings);
  const window = windowSettingsOfName(engine);
  if (window !== null) return new WindowFinder(grid, settings, window);
  return new WasmClusterer(grid, settings);
}

function windowOf(engine: EngineName, emulation: EmulationMode | null) {
  return emulation !== null && typeof emulation === 'object' && 'window' in emulation ? emulation.window : windowSettingsOfName(engine);
}

/** The reference a clusterer's jets are checked against: with pileup steps on, the reference's chain. */
export function makeReferenceClusterer(grid: Grid, settings: ClusterSettings, pileup?: PileupSettings | null, command = 'run', grooming?: GroomingSettings | null): Clusterer {
  const base = pileupStepsOn(pileup) ? new PileupReferenceClusterer(grid, settings, pileup, command) : new ReferenceClusterer(grid, settings);
  if (!groomingIsOn(grooming)) return base;
  checkGroomingGrid(grid, command);
  return new GroomingClusterer(base, new ReferenceGroomer(grid, grooming!, settings.radius));
}

/** Grooming re-clusters generalised-kt jets' towers: the window finder and the emulations take none. */
function refuseGrooming(engine: EngineName, emulation: EmulationMode | null, command: string): void {
  if (emulation !== null || windowSettingsOfName(engine) !== null) {
    throw new UsageError(`${command}: --trim and --softdrop groom the engine's or the reference's jets only; leave them out with --emulate or the window finder`);
  }
}

/**
 * The window finder is no generalised kt: areas, ρ and subtraction do not apply to it (spec
 * section 11); the precision emulations model the plain clustering only.
 */
function refusePileupSteps(engine: EngineName, emulation: EmulationMode | null, command: string): void {
  if (windowOf(engine, emulation) !== null) {
    throw new UsageError(`${command}: the window finder takes no --areas, --rho or --subtract (they do not apply to it, spec section 11); --softkiller alone it takes`);
  }
  if (emulation !== null) {
    throw new UsageError(`${command}: --emulate ${emulation === 'f32' ? 'f32' : 'fixed'} emulates the plain clustering only; leave out --areas, --rho, --subtract and --softkiller`);
  }
}
