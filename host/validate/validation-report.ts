// The validation report of `jetlag compare`: tolerance-mode results (tolerance-compare.ts)
// gathered over a whole file, as JSON and as a terminal summary.
//
//   events     valid events of EVENTS = compared + missing from the candidate + invalid in
//              the candidate; agreeing / valid events is the agreeing fraction. Events that
//              are invalid in EVENTS are counted apart and never compared.
//   jets       above ptMin, over compared events: efficiency = matched / reference jets,
//              fake rate = extra candidate jets / candidate jets, extra as tolerance-compare.ts
//              says (unmatched, or standing on a softer reference jet it does not agree with).
//              An event missing from the candidate adds nothing here; it counts as a
//              disagreeing event.
//   response   x = pt_cand / pt_ref - 1 and ΔR of matched pairs whose reference jet is above
//              ptMin; mean and RMS from every value (RMS is the spread about the mean, the standard
//              deviation), quantiles from a log-binned histogram (deviation-histogram.ts).
//   bins       reference pt [GeV]: 0, 20, 40, 80, 160, 320, above (doubling widths, since jet
//              spectra fall steeply); |η| of the reference jet (η = asinh(pz / pt)): 0, 0.5,
//              1.0, 1.5, 2.0, 2.5, above (the default grid ends at 2.5). Fakes are binned by
//              the candidate jet's pt and |η| (from pt, y and m when m is given, else |y|).
//   worst      the events furthest from agreeing (ToleranceMatcher.badness), with the jets
//              that do not agree.
//
// The report's shape is here; ValidationAccumulator (validation-accumulator.ts) gathers it,
// formatValidationReport (validation-text.ts) writes it as terminal text.

import type { ToleranceSettings } from './tolerance-compare.js';
import type { DistributionSummary } from './deviation-histogram.js';

export const PT_BIN_EDGES_GEV = [0, 20, 40, 80, 160, 320] as const;
export const ABS_ETA_BIN_EDGES = [0, 0.5, 1.0, 1.5, 2.0, 2.5] as const;

export interface BinReport {
  /** [low, high) in GeV or |η|; high null for the open last bin */
  low: number;
  high: number | null;
  referenceJets: number;
  matched: number;
  agreeing: number;
  efficiency: number | null;
  candidateJets: number;
  extraCandidates: number;
  fakeRate: number | null;
  response: DistributionSummary;
  deltaR: DistributionSummary;
}

export interface JetDisagreement {
  /** reference jet number in output order, null for an extra candidate jet */
  referenceJet: number | null;
  candidateJet: number | null;
  reference: { pt: number; y: number; phi: number } | null;
  candidate: { pt: number; y: number; phi: number } | null;
  ptRatio: number | null;
  deltaR: number | null;
  status: 'outside tolerance' | 'unmatched' | 'extra';
}

export interface WorstEvent {
  event: number;
  badness: number;
  jets: JetDisagreement[];
}

export interface NamedProblem {
  count: number;
  examples: string[];
}

export interface ValidationReport {
  tolerance: ToleranceSettings;
  events: {
    read: number;
    invalidInEvents: number;
    valid: number;
    compared: number;
    agreeing: number;
    disagreeing: number;
    missingFromCandidate: number;
    invalidInCandidate: number;
    agreeingFraction: number | null;
  };
  jets: {
    referenceAbove: number;
    matched: number;
    agreeing: number;
    efficiency: number | null;
    agreeingFraction: number | null;
    candidateAbove: number;
    unmatchedCandidates: number;
    extraCandidates: number;
    fakeRate: number | null;
  };
  response: DistributionSummary;
  deltaR: DistributionSummary;
  byReferencePt: BinReport[];
  byAbsEta: BinReport[];
  worstEvents: WorstEvent[];
  problems: Record<string, NamedProblem>;
}

/** What compare needs of one event's jets to describe them (a JetSet fits). */
export interface ReportJets {
  count: number;
  pt: ArrayLike<number>;
  rapidity: ArrayLike<number>;
  phi: ArrayLike<number>;
}

/** part / whole, null when there is no whole */
export function ratio(part: number, whole: number): number | null {
  return whole > 0 ? part / whole : null;
}
