// Algorithm settings of one engine instance, fixed by configure() (called once from the host).

import { REACH_WIDENING, BOUND_WIDENING, COORDINATE_WIDENING } from './search-constants';

// @ts-ignore: decorator
@inline export const BEAM: i32 = 0x7fffffff;
// @ts-ignore: decorator
@inline export const PI: f64 = 3.141592653589793;
// @ts-ignore: decorator
@inline export const TWO_PI: f64 = 6.283185307179586;

/** 0: p = -1, 1: p = 0, 2: p = 1, 3: any other p (Math.pow) */
export let pMode: i32 = 0;
export let pValue: f64 = -1;
export let invR2: f64 = 0;
/** squared reach of the neighbour search: a pair can only win when dR2 <= R*R up to a few ulp
 * (search-constants.ts REACH_WIDENING) */
export let reach2: f64 = 0;
/** sqrt(reach2) widened again, for choosing cells (never for deciding a pair) */
export let reach: f64 = 0;
export let ptMin: f64 = 0;
export let threshold: f64 = 0;
export let winnerTakeAll: bool = false;
/** no beam candidates: only pairs compete (soft drop's re-clustering, grooming.ts and
 * groom-pairs.ts, where every jet's neighbour is then sought without a reach) */
export let beamsOff: bool = false;

export function setBeamsOff(off: bool): void {
  beamsOff = off;
}
export let etaMin: f64 = 0;
/** approximate row and column pitch, for choosing cells only */
export let etaPitch: f64 = 0;
export let phiPitch: f64 = 0;
export let invEtaPitch: f64 = 0;
export let invPhiPitch: f64 = 0;
/** a jet at most this far from its cell centre in y and in phi lies in its cell's own area: such
 * jets are found by windows widened by these, and only the others are listed (cells.ts) */
export let insideY: f64 = 0;
export let insidePhi: f64 = 0;
export let insideNorm: f64 = 0;

export function configure(p: f64, radius: f64, ptMinGeV: f64, thresholdGeV: f64, wta: i32,
  etaLow: f64, etaHigh: f64, etaCount: i32, phiCount: i32): void {
  pValue = p;
  pMode = p == -1 ? 0 : p == 0 ? 1 : p == 1 ? 2 : 3;
  invR2 = 1 / (radius * radius);
  reach2 = radius * radius * (1 + REACH_WIDENING);
  reach = Math.sqrt(reach2) * (1 + BOUND_WIDENING) + COORDINATE_WIDENING;
  ptMin = ptMinGeV;
  threshold = thresholdGeV;
  winnerTakeAll = wta != 0;
  etaMin = etaLow;
  etaPitch = (etaHigh - etaLow) / <f64>etaCount;
  phiPitch = TWO_PI / <f64>phiCount;
  invEtaPitch = 1 / etaPitch;
  invPhiPitch = 1 / phiPitch;
  insideY = 0.5 * etaPitch;
  insidePhi = 0.5 * phiPitch;
  insideNorm = Math.sqrt(insideY * insideY + insidePhi * insidePhi) * (1 + BOUND_WIDENING);
}
