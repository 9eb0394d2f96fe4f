// Tolerance mode of clustering-spec.md section 7: an outside implementation's jets (the
// candidate) against the reference's, for one event at a time.
//
//   Reference jets are taken in decreasing pt (ties to the smaller jet number); each takes the
//   closest still unmatched candidate jet with ΔR < matchR (ties to the smaller candidate
//   number). A matched pair agrees when |pt_cand / pt_ref - 1| <= ptTol and ΔR <= angleTol.
//   ΔR is measured in (y, φ) as reported, with the azimuth taken the short way round whatever
//   range the candidate reports φ in.
//   The event agrees when every reference jet with pt >= ptMin agrees and the candidate has
//   no extra jet with pt >= ptMin (a candidate jet whose pt is NaN counts as one: it is not
//   below ptMin). "Extra" is read as: unmatched, or matched to a reference jet
//   below ptMin that it does not agree with (else a hard fake standing on a soft reference
//   jet would pass).
//
// Data layout (ToleranceMatcher, all preallocated and grown only when an event has more jets;
// only [0, count) is meaningful after match()):
//   refOrder    Int32Array    reference jet numbers in matching order (decreasing pt)
//   refMatch    Int32Array    per reference jet: matched candidate jet number, -1 if none
//   refDeltaR   Float64Array  per reference jet: ΔR to its match (NaN if none)
//   refPtRatio  Float64Array  per reference jet: pt_cand / pt_ref of its match (NaN if none)
//   refAgrees   Uint8Array    per reference jet: 1 when matched within both tolerances
//   candMatch   Int32Array    per candidate jet: matched reference jet number, -1 if none
//   candExtra   Uint8Array    per candidate jet: 1 when it counts as extra (above ptMin)

const TWO_PI = 2 * Math.PI;
const NONE = -1;

export interface ToleranceSettings {
  /** GeV; jets below take part in matching but need not agree */
  ptMin: number;
  /** matching radius in (y, φ) (default 0.1) */
  matchR: number;
  /** allowed |pt_cand / pt_ref - 1| (default 1e-3) */
  ptTol: number;
  /** allowed ΔR of a matched pair (default 1e-3) */
  angleTol: number;
}

export const DEFAULT_TOLERANCE: Readonly<ToleranceSettings> = Object.freeze({
  ptMin: 0,
  matchR: 0.1,
  ptTol: 1e-3,
  angleTol: 1e-3,
});

/** The part of a jet list that tolerance mode looks at; a JetSet is one. */
export interface JetKinematics {
  count: number;
  pt: ArrayLike<number>;
  rapidity: ArrayLike<number>;
  phi: ArrayLike<number>;
}

/** Throws a one-line error naming the bad setting. */
export function checkToleranceSettings(settings: ToleranceSettings): void {
  const checks: [keyof ToleranceSettings, string, number][] = [
    ['ptMin', '--ptmin', settings.ptMin],
    ['matchR', '--match-r', settings.matchR],
    ['ptTol', '--pt-tol', settings.ptTol],
    ['angleTol', '--angle-tol', settings.angleTol],
  ];
  for (const [key, option, value] of checks) {
    const positive = key === 'matchR';
    if (!Number.isFinite(value) || value < 0 || (positive && value === 0)) {
      throw new Error(`${option} must be a finite number ${positive ? '> 0' : '>= 0'}, got ${value}`);
    }
  }
}

/**
 * ΔR in (y, φ), the azimuth difference brought into [0, π] from any two angles (a candidate
 * may report φ in (-π, π] or even unwrapped).
 */
export function deltaR(yA: number, phiA: number, yB: number, phiB: number): number {
  return Math.sqrt(deltaR2(yA, phiA, yB, phiB));
}

/** ΔR squared, as deltaR takes it */
export function deltaR2(yA: number, phiA: number, yB: number, phiB: number): number {
  let dphi = Math.abs(phiA - phiB);
  if (dphi >= TWO_PI) dphi = dphi % TWO_PI;
  if (dphi > Math.PI) dphi = TWO_PI - dphi;
  const dy = yA - yB;
  return dy * dy + dphi * dphi;
}

export class ToleranceMatcher {
  readonly settings: ToleranceSettings;

  refOrder = new Int32Array(64);
  refMatch = new Int32Array(64);
  refDeltaR = new Float64Array(64);
  refPtRatio = new Float64Array(64);
  refAgrees = new Uint8Array(64);
  candMatch = new Int32Array(64);
  candExtra = new Uint8Array(64);

  /** counts of the last match() */
  refCount = 0;
  candCount = 0;
  /** reference jets with pt >= ptMin */
  refAbove = 0;
  /** ... of which matched, and matched within tolerance */
  refAboveMatched = 0;
  refAboveAgreeing = 0;
  /** candidate jets with pt >= ptMin, and of those unmatched (fakes) and extra */
  candAbove = 0;
  candAboveUnmatched = 0;
  candAboveExtra = 0;
  /** largest max(|ratio - 1| / ptTol, ΔR / angleTol) among matched required jets */
  worstPull = 0;
  eventAgrees = true;

  constructor(settings: ToleranceSettings = DEFAULT_TOLERANCE) {
    checkToleranceSettings(settings);
    this.settings = { ...settings };
  }

  private ensure(refCount: number, candCount: number): void {
    if (refCount > this.refOrder.length) {
      const size = Math.max(refCount, 2 * this.refOrder.length);
      this.refOrder = new Int32Array(size);
      this.refMatch = new Int32Array(size);
      this.refDeltaR = new Float64Array(size);
      this.refPtRatio = new Float64Array(size);
      this.refAgrees = new Uint8Array(size);
    }
    if (candCount > this.candMatch.length) {
      const size = Math.max(candCount, 2 * this.candMatch.length);
      this.candMatch = new Int32Array(size);
      this.candExtra = new Uint8Array(size);
    }
  }

  /** Matches one event's jets; returns whether the event agrees (also in eventAgrees). */
  match(reference: JetKinematics, candidate: JetKinematics): boolean {
    const { ptMin, matchR, ptTol, angleTol } = this.settings;
    const refCount = reference.count;
    const candCount = candidate.count;
    this.ensure(refCount, candCount);
    const refPt = reference.pt;
    const refY = reference.rapidity;
    const refPhi = reference.phi;
    const candPt = candidate.pt;
    const candY = candidate.rapidity;
    const candPhi = candidate.phi;
    const order = this.refOrder;
    const refMatch = this.refMatch;
    const refDeltaR = this.refDeltaR;
    const refPtRatio = this.refPtRatio;
    const refAgrees = this.refAgrees;
    const candMatch = this.candMatch;
    const candExtra = this.candExtra;

    // matching order: decreasing pt, ties to the smaller number (insertion sort: the
    // reference's own output is already in this order, so this is one pass)
    for (let r = 0; r < refCount; r++) {
      let k = r;
      while (k > 0 && refPt[order[k - 1]] < refPt[r]) {
        order[k] = order[k - 1];
        k--;
      }
      order[k] = r;
    }
    for (let c = 0; c < candCount; c++) {
      candMatch[c] = NONE;
      candExtra[c] = 0;
    }

    let refAbove = 0;
    let refAboveMatched = 0;
    let refAboveAgreeing = 0;
    let worstPull = 0;
    for (let k = 0; k < refCount; k++) {
      const r = order[k];
      const y = refY[r];
      const phi = refPhi[r];
      // the closest unmatched candidate by squared distance (no square root per pair), then
      // the radius on its ΔR: sqrt is monotone, so if the closest fails no other passes
      let best = NONE;
      let bestDeltaR2 = Infinity;
      for (let c = 0; c < candCount; c++) {
        if (candMatch[c] !== NONE) continue;
        const distance2 = deltaR2(candY[c], candPhi[c], y, phi);
        // strictly closer wins, so equal distances go to the smaller candidate number
        if (distance2 < bestDeltaR2) {
          best = c;
          bestDeltaR2 = distance2;
        }
      }
      const bestDeltaR = Math.sqrt(bestDeltaR2);
      if (!(bestDeltaR < matchR)) best = NONE;
      refMatch[r] = best;
      const above = refPt[r] >= ptMin;
      if (above) refAbove++;
      if (best === NONE) {
        refDeltaR[r] = NaN;
        refPtRatio[r] = NaN;
        refAgrees[r] = 0;
        continue;
      }
      candMatch[best] = r;
      const ratio = candPt[best] / refPt[r];
      refDeltaR[r] = bestDeltaR;
      refPtRatio[r] = ratio;
      // written so that NaN fails
      const ptDeviation = Math.abs(ratio - 1);
      const agrees = ptDeviation <= ptTol && bestDeltaR <= angleTol;
      refAgrees[r] = agrees ? 1 : 0;
      if (above) {
        refAboveMatched++;
        if (agrees) refAboveAgreeing++;
        // a zero tolerance makes any difference infinitely far; NaN is worst of all
        const pull = Math.max(ptDeviation === 0 ? 0 : ptDeviation / ptTol, bestDeltaR === 0 ? 0 : bestDeltaR / angleTol);
        if (Number.isNaN(pull)) worstPull = Infinity;
        else if (pull > worstPull) worstPull = pull;
      }
    }

    let candAbove = 0;
    let candAboveUnmatched = 0;
    let candAboveExtra = 0;
    for (let c = 0; c < candCount; c++) {
      // a NaN pt is not shown to lie below ptMin, so it must not slip through as soft
      if (candPt[c] < ptMin) continue;
      candAbove++;
      const r = candMatch[c];
      if (r === NONE) {
        candAboveUnmatched++;
        candAboveExtra++;
        candExtra[c] = 1;
      } else if (!(refPt[r] >= ptMin) && refAgrees[r] === 0) {
        candAboveExtra++;
        candExtra[c] = 1;
      }
    }

    this.refCount = refCount;
    this.candCount = candCount;
    this.refAbove = refAbove;
    this.refAboveMatched = refAboveMatched;
    this.refAboveAgreeing = refAboveAgreeing;
    this.candAbove = candAbove;
    this.candAboveUnmatched = candAboveUnmatched;
    this.candAboveExtra = candAboveExtra;
    this.worstPull = worstPull;
    this.eventAgrees = refAboveAgreeing === refAbove && candAboveExtra === 0;
    return this.eventAgrees;
  }

  /**
   * How far the last event is from agreeing, for ranking the worst events: every missing
   * required jet and every extra jet counts 1e6 (they outrank any size of difference), plus
   * the largest tolerance pull max(|ratio - 1| / ptTol, ΔR / angleTol) among the required
   * jets, capped below 1e6. 0 when every required jet matches exactly.
   */
  badness(): number {
    return (this.refAbove - this.refAboveMatched + this.candAboveExtra) * 1e6 + Math.min(this.worstPull, 1e6 - 1);
  }
}
