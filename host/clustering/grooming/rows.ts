// Making grooming's rows (types.ts TrimmedJets, SoftDropJets): one place that knows every field.
// Row k belongs to the JetSet's jet k; every value starts at zero, which is also what an empty
// trimmed jet reports (spec section 12).

import type { SoftDropJets, TrimmedJets } from '../../types.js';
import { allocateFourVectors } from '../jet-set.js';

export function allocateTrimmedJets(count: number): TrimmedJets {
  return { ...allocateFourVectors(count), subjets: new Int32Array(count) };
}

export function allocateSoftDropJets(count: number): SoftDropJets {
  return { ...allocateFourVectors(count), zg: new Float64Array(count), deltaRg: new Float64Array(count) };
}
