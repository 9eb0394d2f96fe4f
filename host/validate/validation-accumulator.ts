// ValidationAccumulator: tolerance-mode results (tolerance-compare.ts) of one event after another,
// gathered into the validation report (validation-report.ts says what each part means).

import { DeviationHistogram } from './deviation-histogram.js';
import type { ToleranceMatcher, ToleranceSettings } from './tolerance-compare.js';
import {
  ABS_ETA_BIN_EDGES, PT_BIN_EDGES_GEV, ratio,
  type BinReport, type JetDisagreement, type NamedProblem, type ReportJets, type ValidationReport, type WorstEvent,
} from './validation-report.js';

const DEFAULT_WORST_EVENTS = 10;
/** named problems keep this many examples each (all are counted) */
const PROBLEM_EXAMPLES = 20;

/** Per bin of reference pt or |η|. */
class JetBin {
  referenceJets = 0;
  matched = 0;
  agreeing = 0;
  candidateJets = 0;
  extraCandidates = 0;
  readonly response = new DeviationHistogram();
  readonly deltaR = new DeviationHistogram();
}

export class ValidationAccumulator {
  readonly tolerance: ToleranceSettings;
  readonly worstLimit: number;
  read = 0;
  invalidInEvents = 0;
  compared = 0;
  agreeing = 0;
  missingFromCandidate = 0;
  invalidInCandidate = 0;
  referenceAbove = 0;
  matched = 0;
  agreeingJets = 0;
  candidateAbove = 0;
  unmatchedCandidates = 0;
  extraCandidates = 0;
  readonly response = new DeviationHistogram();
  readonly deltaR = new DeviationHistogram();
  private readonly ptBins = PT_BIN_EDGES_GEV.map(() => new JetBin());
  private readonly etaBins = ABS_ETA_BIN_EDGES.map(() => new JetBin());
  private readonly worst: WorstEvent[] = [];
  private readonly problemTable = new Map<string, NamedProblem>();

  constructor(tolerance: ToleranceSettings, worstLimit = DEFAULT_WORST_EVENTS) {
    this.tolerance = { ...tolerance };
    this.worstLimit = worstLimit;
  }

  /** Names a problem of the inputs (kind is a short stable key, detail one line). */
  problem(kind: string, detail: string): void {
    let entry = this.problemTable.get(kind);
    if (!entry) {
      entry = { count: 0, examples: [] };
      this.problemTable.set(kind, entry);
    }
    entry.count++;
    if (entry.examples.length < PROBLEM_EXAMPLES) entry.examples.push(detail);
  }

  problemCount(kind: string): number {
    return this.problemTable.get(kind)?.count ?? 0;
  }

  /** An event of EVENTS that is invalid there: counted, not compared. */
  addInvalidInEvents(): void {
    this.read++;
    this.invalidInEvents++;
  }

  /** A valid event the candidate has no record of (jets-file candidates). */
  addMissing(event: number, detail: string): void {
    this.read++;
    this.missingFromCandidate++;
    this.problem('missing events', `event ${event}: ${detail}`);
  }

  /** A valid event the candidate reports invalid. */
  addInvalidInCandidate(event: number, detail: string): void {
    this.read++;
    this.invalidInCandidate++;
    this.problem('events invalid in the candidate only', `event ${event}: ${detail}`);
  }

  /**
   * An event compared by `matcher.match(reference, candidate)` just before. referencePz gives
   * the reference jets' η; candidateMass (or null) the candidate's.
   */
  addCompared(
    event: number,
    matcher: ToleranceMatcher,
    reference: ReportJets & { pz: ArrayLike<number> },
    candidate: ReportJets,
    candidateMass: ArrayLike<number> | null,
  ): void {
    this.read++;
    this.compared++;
    if (matcher.eventAgrees) this.agreeing++;
    this.referenceAbove += matcher.refAbove;
    this.matched += matcher.refAboveMatched;
    this.agreeingJets += matcher.refAboveAgreeing;
    this.candidateAbove += matcher.candAbove;
    this.unmatchedCandidates += matcher.candAboveUnmatched;
    this.extraCandidates += matcher.candAboveExtra;
    const ptMin = this.tolerance.ptMin;

    for (let r = 0; r < reference.count; r++) {
      const pt = reference.pt[r];
      if (!(pt >= ptMin)) continue;
      const ptBin = this.ptBins[binIndex(PT_BIN_EDGES_GEV, pt)];
      const etaBin = this.etaBins[binIndex(ABS_ETA_BIN_EDGES, Math.abs(Math.asinh(reference.pz[r] / pt)))];
      ptBin.referenceJets++;
      etaBin.referenceJets++;
      if (matcher.refMatch[r] < 0) continue;
      ptBin.matched++;
      etaBin.matched++;
      if (matcher.refAgrees[r] === 1) {
        ptBin.agreeing++;
        etaBin.agreeing++;
      }
      const x = matcher.refPtRatio[r] - 1;
      const distance = matcher.refDeltaR[r];
      this.response.add(x);
      this.deltaR.add(distance);
      ptBin.response.add(x);
      etaBin.response.add(x);
      ptBin.deltaR.add(distance);
      etaBin.deltaR.add(distance);
    }
    for (let c = 0; c < candidate.count; c++) {
      const pt = candidate.pt[c];
      if (pt < ptMin) continue; // NaN counts, as in tolerance-compare.ts
      const y = candidate.rapidity[c];
      let absEta = Math.abs(y);
      if (candidateMass !== null && candidateMass[c] > 0) {
        const mass = candidateMass[c];
        absEta = Math.abs(Math.asinh((Math.sqrt(pt * pt + mass * mass) * Math.sinh(y)) / pt));
      }
      const ptBin = this.ptBins[binIndex(PT_BIN_EDGES_GEV, pt)];
      const etaBin = this.etaBins[binIndex(ABS_ETA_BIN_EDGES, absEta)];
      ptBin.candidateJets++;
      etaBin.candidateJets++;
      if (matcher.candExtra[c] === 1) {
        ptBin.extraCandidates++;
        etaBin.extraCandidates++;
      }
    }

    if (!matcher.eventAgrees) this.considerWorst(event, matcher, reference, candidate);
  }

  private considerWorst(event: number, matcher: ToleranceMatcher, reference: ReportJets, candidate: ReportJets): void {
    if (this.worstLimit <= 0) return;
    const badness = matcher.badness();
    const full = this.worst.length >= this.worstLimit;
    if (full && !(badness > this.worst[this.worst.length - 1].badness)) return;
    const ptMin = this.tolerance.ptMin;
    const jets: JetDisagreement[] = [];
    const jetOf = (set: ReportJets, k: number) => ({ pt: set.pt[k], y: set.rapidity[k], phi: set.phi[k] });
    for (let k = 0; k < matcher.refCount; k++) {
      const r = matcher.refOrder[k];
      const c = matcher.refMatch[r];
      const required = reference.pt[r] >= ptMin;
      if (c < 0) {
        if (required) jets.push({ referenceJet: r, candidateJet: null, reference: jetOf(reference, r), candidate: null, ptRatio: null, deltaR: null, status: 'unmatched' });
        continue;
      }
      if (matcher.refAgrees[r] === 1) continue;
      if (!required && matcher.candExtra[c] === 0) continue;
      jets.push({
        referenceJet: r, candidateJet: c, reference: jetOf(reference, r), candidate: jetOf(candidate, c),
        ptRatio: matcher.refPtRatio[r], deltaR: matcher.refDeltaR[r], status: required ? 'outside tolerance' : 'extra',
      });
    }
    for (let c = 0; c < matcher.candCount; c++) {
      if (matcher.candExtra[c] === 1 && matcher.candMatch[c] < 0) {
        jets.push({ referenceJet: null, candidateJet: c, reference: null, candidate: jetOf(candidate, c), ptRatio: null, deltaR: null, status: 'extra' });
      }
    }
    const entry: WorstEvent = { event, badness, jets };
    // insert keeping decreasing badness, earlier events first among equals
    let at = this.worst.length;
    while (at > 0 && this.worst[at - 1].badness < badness) at--;
    this.worst.splice(at, 0, entry);
    if (this.worst.length > this.worstLimit) this.worst.pop();
  }

  report(): ValidationReport {
    const valid = this.compared + this.missingFromCandidate + this.invalidInCandidate;
    const problems: Record<string, NamedProblem> = {};
    for (const [kind, entry] of this.problemTable) problems[kind] = { count: entry.count, examples: [...entry.examples] };
    return {
      tolerance: { ...this.tolerance },
      events: {
        read: this.read,
        invalidInEvents: this.invalidInEvents,
        valid,
        compared: this.compared,
        agreeing: this.agreeing,
        disagreeing: valid - this.agreeing,
        missingFromCandidate: this.missingFromCandidate,
        invalidInCandidate: this.invalidInCandidate,
        agreeingFraction: ratio(this.agreeing, valid),
      },
      jets: {
        referenceAbove: this.referenceAbove,
        matched: this.matched,
        agreeing: this.agreeingJets,
        efficiency: ratio(this.matched, this.referenceAbove),
        agreeingFraction: ratio(this.agreeingJets, this.referenceAbove),
        candidateAbove: this.candidateAbove,
        unmatchedCandidates: this.unmatchedCandidates,
        extraCandidates: this.extraCandidates,
        fakeRate: ratio(this.extraCandidates, this.candidateAbove),
      },
      response: this.response.summary(1),
      deltaR: this.deltaR.summary(),
      byReferencePt: binReports(PT_BIN_EDGES_GEV, this.ptBins),
      byAbsEta: binReports(ABS_ETA_BIN_EDGES, this.etaBins),
      worstEvents: this.worst.map((w) => ({ ...w, jets: w.jets.map((j) => ({ ...j })) })),
      problems,
    };
  }
}

function binIndex(edges: readonly number[], value: number): number {
  let k = edges.length - 1;
  while (k > 0 && !(value >= edges[k])) k--;
  return k;
}

function binReports(edges: readonly number[], bins: JetBin[]): BinReport[] {
  return bins.map((bin, k) => ({
    low: edges[k],
    high: k + 1 < edges.length ? edges[k + 1] : null,
    referenceJets: bin.referenceJets,
    matched: bin.matched,
    agreeing: bin.agreeing,
    efficiency: ratio(bin.matched, bin.referenceJets),
    candidateJets: bin.candidateJets,
    extraCandidates: bin.extraCandidates,
    fakeRate: ratio(bin.extraCandidates, bin.candidateJets),
    response: bin.response.summary(1),
    deltaR: bin.deltaR.summary(),
  }));
}
