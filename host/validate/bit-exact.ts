// Bit-exact comparison of two clusterers' jets for one event (clustering-spec.md section 7,
// bit-exact mode): same number of jets, same constituents, every reported double identical.
// Doubles are compared with Object.is, so -0 differs from 0 and NaN equals only NaN.

import { JET_DOUBLE_FIELDS } from '../clustering/jet-set.js';
import type { JetSet } from '../types.js';

export interface JetDifference {
  /** jet number in output order; -1 when the jet counts differ */
  jet: number;
  field: string;
  engineValue: number;
  referenceValue: number;
}

/** The first difference between the engine's jets and the reference's, or null when identical. */
export function firstJetDifference(engine: JetSet, reference: JetSet): JetDifference | null {
  if (engine.count !== reference.count) {
    return { jet: -1, field: 'count', engineValue: engine.count, referenceValue: reference.count };
  }
  for (let jet = 0; jet < reference.count; jet++) {
    for (const field of JET_DOUBLE_FIELDS) {
      const engineValue = engine[field][jet];
      const referenceValue = reference[field][jet];
      if (!Object.is(engineValue, referenceValue)) return { jet, field, engineValue, referenceValue };
    }
    const count = reference.towerCount[jet];
    if (engine.towerCount[jet] !== count) {
      return { jet, field: 'towerCount', engineValue: engine.towerCount[jet], referenceValue: count };
    }
    const engineStart = engine.towerStart[jet];
    const referenceStart = reference.towerStart[jet];
    const engineHasTowers = engine.towers.length >= engineStart + count;
    const referenceHasTowers = reference.towers.length >= referenceStart + count;
    if (engineHasTowers !== referenceHasTowers) {
      return { jet, field: 'towers.length', engineValue: engine.towers.length, referenceValue: reference.towers.length };
    }
    if (!engineHasTowers) continue;
    for (let k = 0; k < count; k++) {
      const engineTower = engine.towers[engineStart + k];
      const referenceTower = reference.towers[referenceStart + k];
      if (engineTower !== referenceTower) {
        return { jet, field: `towers[${k}]`, engineValue: engineTower, referenceValue: referenceTower };
      }
    }
  }
  return null;
}

/** One line for stderr or a summary: where and by how much two clusterers differ. */
export function describeDifference(event: number, difference: JetDifference): string {
  if (difference.jet < 0) {
    return `event ${event}: engine gives ${difference.engineValue} jets, reference ${difference.referenceValue}`;
  }
  const { engineValue, referenceValue } = difference;
  // the distance in ulps says how close two doubles are
  let apart = '';
  if ((JET_DOUBLE_FIELDS as readonly string[]).includes(difference.field)) {
    const ulps = ulpDistance(engineValue, referenceValue);
    if (ulps !== null) apart = ` (${ulps} ulp${ulps === 1 ? '' : 's'} apart)`;
  }
  return `event ${event}, jet ${difference.jet}, ${difference.field}: engine ${showDouble(engineValue)}, reference ${showDouble(referenceValue)}${apart}`;
}

/**
 * A double in its shortest round-trip form, so two different values never print alike; -0
 * needs its sign spelled out.
 */
export function showDouble(x: number): string {
  return Object.is(x, -0) ? '-0' : String(x);
}

const ulpView = new DataView(new ArrayBuffer(8));

/** a double's position on the number line counted in representable steps (-0 and 0 are one) */
function ulpOrdinal(x: number): bigint {
  ulpView.setFloat64(0, x);
  const bits = ulpView.getBigInt64(0);
  return bits < 0n ? -(bits & 0x7fffffffffffffffn) : bits;
}

/**
 * How many representable doubles apart two finite values are (1 for neighbours, 0 for 0 and
 * -0); null when either is not finite. Exact up to 2^53, rounded above.
 */
export function ulpDistance(a: number, b: number): number | null {
  if (!Number.isFinite(a) || !Number.isFinite(b)) return null;
  const d = ulpOrdinal(a) - ulpOrdinal(b);
  return Number(d < 0n ? -d : d);
}
