// Tower four-vectors, weights, distances and recombination, in the exact order of operations of
// clustering-spec.md sections 2, 3 and 5. Math.log, Math.atan2, Math.pow, Math.cos ... are the
// host's (asconfig: --use Math=JSMath); sqrt, abs, min, max are exact wasm instructions.
//
// Jet arrays (index = jet index of the spec, towers 0..N-1 then merges N, N+1, ...):
//   jetPx jetPy jetPz jetE jetKt2 jetY jetPhi f64

import { etaCentre, sinhEta, coshEta, phiCentre, cosPhi, sinPhi, phiBins,
  jetPx, jetPy, jetPz, jetE, jetKt2, jetY, jetPhi, jetInto, getF64, setF64, setI32 } from './layout';
import { pMode, pValue, reach2, PI, TWO_PI, winnerTakeAll } from './settings';

// weights within these bounds keep (w * dR2) * invR2 monotone and away from underflow and
// overflow, so "dR2 beyond the reach" really means "loses to the beam"; others search everywhere
// @ts-ignore: decorator
@inline const WIDE_LOW: f64 = 1.0e-289; // about 2^-960
// @ts-ignore: decorator
@inline const WIDE_HIGH: f64 = 1.0e289;

export function weightOf(kt2: f64): f64 {
  if (pMode == 0) return 1 / kt2;
  if (pMode == 1) return 1;
  if (pMode == 2) return kt2;
  return Math.pow(kt2, pValue);
}

/** true when the jet's neighbour must be sought among all jets, not only within the reach */
export function needsWideSearch(w: f64): bool {
  const wr = w * reach2;
  return !(w >= WIDE_LOW && w <= WIDE_HIGH && wr >= WIDE_LOW && wr <= WIDE_HIGH);
}

// @ts-ignore: decorator
@inline export function deltaR2(y1: f64, phi1: f64, y2: f64, phi2: f64): f64 {
  let dphi = abs<f64>(phi1 - phi2);
  dphi = select<f64>(TWO_PI - dphi, dphi, dphi > PI); // the spec's "if dphi > pi", without a branch
  const dy = y1 - y2;
  return dy * dy + dphi * dphi;
}

/** Jet `jet` becomes the tower at flat index `flat` with transverse energy `et`. */
export function loadTower(jet: i32, flat: i32, et: f64): void {
  const ieta = flat / phiBins;
  const iphi = flat - ieta * phiBins;
  setF64(jetPx, jet, et * getF64(cosPhi, iphi));
  setF64(jetPy, jet, et * getF64(sinPhi, iphi));
  setF64(jetPz, jet, et * getF64(sinhEta, ieta));
  setF64(jetE, jet, et * getF64(coshEta, ieta));
  setF64(jetKt2, jet, et * et);
  setF64(jetY, jet, getF64(etaCentre, ieta));
  setF64(jetPhi, jet, getF64(phiCentre, iphi));
}

/** Jet k is made from jets a and b (a < b). */
export function mergeJets(a: i32, b: i32, k: i32): void {
  if (winnerTakeAll) {
    const kt2a = getF64(jetKt2, a);
    const kt2b = getF64(jetKt2, b);
    const pt = sqrt<f64>(kt2a) + sqrt<f64>(kt2b);
    const hard = kt2b > kt2a ? b : a; // ties to the smaller index, a
    const y = getF64(jetY, hard);
    const phi = getF64(jetPhi, hard);
    setF64(jetKt2, k, pt * pt);
    setF64(jetY, k, y);
    setF64(jetPhi, k, phi);
    setF64(jetPx, k, pt * Math.cos(phi));
    setF64(jetPy, k, pt * Math.sin(phi));
    setF64(jetPz, k, pt * Math.sinh(y));
    setF64(jetE, k, pt * Math.cosh(y));
    return;
  }
  const px = getF64(jetPx, a) + getF64(jetPx, b);
  const py = getF64(jetPy, a) + getF64(jetPy, b);
  const pz = getF64(jetPz, a) + getF64(jetPz, b);
  const e = getF64(jetE, a) + getF64(jetE, b);
  setF64(jetPx, k, px);
  setF64(jetPy, k, py);
  setF64(jetPz, k, pz);
  setF64(jetE, k, e);
  setF64(jetKt2, k, px * px + py * py);
  setF64(jetY, k, 0.5 * Math.log((e + pz) / (e - pz)));
  let phi = Math.atan2(py, px);
  if (phi < 0) phi = phi + TWO_PI;
  if (phi >= TWO_PI) phi = phi - TWO_PI;
  setF64(jetPhi, k, phi);
}

/** Jets i and j (either order) make jet k: its four-vector, and the history in jetInto (k alive). */
export function recordMerge(i: i32, j: i32, k: i32): void {
  mergeJets(min<i32>(i, j), max<i32>(i, j), k);
  setI32(jetInto, i, k);
  setI32(jetInto, j, k);
  setI32(jetInto, k, -1);
}
