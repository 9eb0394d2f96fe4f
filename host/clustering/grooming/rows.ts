// Making grooming's rows (types.ts TrimmedJets, SoftDropJets): one place that knows every field.
// Row k belongs to the JetSet's jet k; every value starts at zero, which is also what an empty
// trimmed jet reports (spec section 12). All of one set's fields are views into one buffer:
// measured, a dozen separate typed arrays per event cost the engine's groomer more than it
// spent grooming a small event's jets.

import type { GroomedFourVectors, SoftDropJets, TrimmedJets } from '../../types.js';

/** the four-vector fields and `extraDoubles` more double fields, then towerCount and
 * `extraInts` more int fields, each `count` long, in one zeroed buffer */
function fieldsInOneBuffer(count: number, extraDoubles: number, extraInts: number): { doubles: Float64Array[]; ints: Int32Array[] } {
  const doubleFields = 8 + extraDoubles;
  const intFields = 1 + extraInts;
  const buffer = new ArrayBuffer(count * (8 * doubleFields + 4 * intFields));
  const doubles: Float64Array[] = [];
  for (let f = 0; f < doubleFields; f++) doubles.push(new Float64Array(buffer, 8 * f * count, count));
  const intsAt = 8 * doubleFields * count;
  const ints: Int32Array[] = [];
  for (let f = 0; f < intFields; f++) ints.push(new Int32Array(buffer, intsAt + 4 * f * count, count));
  return { doubles, ints };
}

function fourVectors(doubles: Float64Array[], towerCount: Int32Array): GroomedFourVectors {
  const [px, py, pz, energy, pt, rapidity, phi, mass] = doubles;
  return { px, py, pz, energy, pt, rapidity, phi, mass, towerCount };
}

export function allocateTrimmedJets(count: number): TrimmedJets {
  const { doubles, ints } = fieldsInOneBuffer(count, 0, 1);
  return { ...fourVectors(doubles, ints[0]), subjets: ints[1] };
}

export function allocateSoftDropJets(count: number): SoftDropJets {
  const { doubles, ints } = fieldsInOneBuffer(count, 2, 0);
  return { ...fourVectors(doubles, ints[0]), zg: doubles[8], deltaRg: doubles[9] };
}
