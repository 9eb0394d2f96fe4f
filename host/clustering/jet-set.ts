// Making JetSet values (types.ts): one place that knows every field.

import type { GroomedFourVectors, JetSet } from '../types.js';

/** the per-jet double fields of a JetSet and of groomed rows, in a fixed order for codecs, copies and comparisons */
export const JET_DOUBLE_FIELDS = ['px', 'py', 'pz', 'energy', 'pt', 'rapidity', 'phi', 'mass'] as const;

/** Per-jet four-vectors, kinematics and tower counts with room for `count` jets, every value zero. */
export function allocateFourVectors(count: number): GroomedFourVectors {
  return {
    px: new Float64Array(count),
    py: new Float64Array(count),
    pz: new Float64Array(count),
    energy: new Float64Array(count),
    pt: new Float64Array(count),
    rapidity: new Float64Array(count),
    phi: new Float64Array(count),
    mass: new Float64Array(count),
    towerCount: new Int32Array(count),
  };
}

/** A JetSet with room for `count` jets, every value zero, and no constituent indices yet. */
export function allocateJetSet(count: number): JetSet {
  return { count, ...allocateFourVectors(count), towerStart: new Int32Array(count), towers: new Int32Array(0) };
}
