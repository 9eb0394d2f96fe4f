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
//              deviation), quantiles from a log-binned histogram (below).
//   bins       reference pt [GeV]: 0, 20, 40, 80, 160, 320, above (doubling widths, since jet
//              spectra fall steeply); |η| of the reference jet (η = asinh(pz / pt)): 0, 0.5,
//              1.0, 1.5, 2.0, 2.5, above (the default grid ends at 2.5). Fakes are binned by
//              the candidate jet's pt and |η| (from pt, y and m when m is given, else |y|).
//   worst      the events furthest from agreeing (ToleranceMatcher.badness), with the jets
//              that do not agree.
//
// Histogram layout (DeviationHistogram): one Float64Array of counts; bins are logarithmic in
// |x| with BINS_PER_DECADE per decade over [1e-18, 1e3), |x| below folded into the first bin
// and above into the last; index layout [negative bins, most negative first | zero | positive
// bins]. Quantiles are the geometric centre of the bin holding the rank, clamped to the exact
// min and max, so their relative precision is about 10^(1/50) - 1 ≈ 4.7 % of |x|.

import type { ToleranceMatcher, ToleranceSettings } from './tolerance-compare.js';

const DECADE_LOW = -18;
const DECADE_HIGH = 3;
const BINS_PER_DECADE = 50;
const SIDE_BINS = (DECADE_HIGH - DECADE_LOW) * BINS_PER_DECADE;
const QUANTILES = [0.01, 0.05, 0.16, 0.5, 0.84, 0.95, 0.99] as const;
const QUANTILE_NAMES = ['p01', 'p05', 'p16', 'p50', 'p84', 'p95', 'p99'] as const;

export const PT_BIN_EDGES_GEV = [0, 20, 40, 80, 160, 320] as const;
export const ABS_ETA_BIN_EDGES = [0, 0.5, 1.0, 1.5, 2.0, 2.5] as const;
const DEFAULT_WORST_EVENTS = 10;
/** named problems keep this many examples each (all are counted) */
const PROBLEM_EXAMPLES = 20;

export type Quantiles = Record<(typeof QUANTILE_NAMES)[number], number | null>;

export interface DistributionSummary {
  count: number;
  mean: number | null;
  rms: number | null;
  min: number | null;
  max: number | null;
  quantiles: Quantiles;
}

/** Signed values over many decades, flat memory; see the layout note at the top. */
export class DeviationHistogram {
  readonly counts = new Float64Array(2 * SIDE_BINS + 1);
  count = 0;
  nanCount = 0;
  private sum = 0;
  // running mean and sum of squared deviations from it (Welford's update, B. P. Welford,
  // Technometrics 4 (1962) 419, from memory): a plain sum of squares minus the squared mean loses every
  // digit of a spread far below the mean, e.g. a 1 % pt offset known to 1e-9
  private runningMean = 0;
  private squaredDeviations = 0;
  min = Infinity;
  max = -Infinity;

  add(x: number): void {
    if (Number.isNaN(x)) { this.nanCount++; return; }
    this.count++;
    this.sum += x;
    const delta = x - this.runningMean;
    this.runningMean += delta / this.count;
    this.squaredDeviations += delta * (x - this.runningMean);
    if (x < this.min) this.min = x;
    if (x > this.max) this.max = x;
    this.counts[binOf(x)]++;
  }

  mean(): number | null {
    return this.count > 0 ? this.sum / this.count : null;
  }

  /** spread about the mean (the standard deviation of the values) */
  rms(): number | null {
    if (this.count === 0) return null;
    return Math.sqrt(Math.max(0, this.squaredDeviations / this.count));
  }

  /** the value of rank q * (count - 1), to the bin's precision; null when empty */
  quantile(q: number): number | null {
    if (this.count === 0) return null;
    const rank = q * (this.count - 1);
    let cumulative = 0;
    for (let b = 0; b < this.counts.length; b++) {
      cumulative += this.counts[b];
      if (cumulative > rank) return Math.min(this.max, Math.max(this.min, centreOf(b)));
    }
    return this.max;
  }

  /** shifted by `offset` (the response is reported as 1 + x) */
  summary(offset = 0): DistributionSummary {
    const quantiles = {} as Quantiles;
    QUANTILES.forEach((q, k) => {
      const value = this.quantile(q);
      quantiles[QUANTILE_NAMES[k]] = value === null ? null : offset + value;
    });
    const mean = this.mean();
    return {
      count: this.count,
      mean: mean === null ? null : offset + mean,
      rms: this.rms(),
      min: this.count > 0 ? offset + this.min : null,
      max: this.count > 0 ? offset + this.max : null,
      quantiles,
    };
  }
}

function binOf(x: number): number {
  if (x === 0) return SIDE_BINS;
  const magnitude = Math.abs(x);
  let step = Math.floor((Math.log10(magnitude) - DECADE_LOW) * BINS_PER_DECADE);
  if (step < 0) step = 0;
  if (step >= SIDE_BINS) step = SIDE_BINS - 1;
  return x > 0 ? SIDE_BINS + 1 + step : SIDE_BINS - 1 - step;
}

function centreOf(bin: number): number {
  if (bin === SIDE_BINS) return 0;
  const step = bin > SIDE_BINS ? bin - SIDE_BINS - 1 : SIDE_BINS - 1 - bin;
  const magnitude = Math.pow(10, DECADE_LOW + (step + 0.5) / BINS_PER_DECADE);
  return bin > SIDE_BINS ? magnitude : -magnitude;
}

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

function ratio(part: number, whole: number): number | null {
  return whole > 0 ? part / whole : null;
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

// ---- terminal text -------------------------------------------------------------------------

function percent(value: number | null): string {
  return value === null ? '-' : `${(100 * value).toFixed(value > 0.99 && value < 1 ? 3 : 2)} %`;
}

/** a number in a few significant digits; a response near 1 keeps the digits that differ */
function short(value: number | null, digits = 4): string {
  if (value === null) return '-';
  if (value === 0) return '0';
  const rounded = Number(value.toPrecision(digits));
  return Math.abs(rounded) < 1e-3 ? rounded.toExponential(Math.max(0, digits - 1)).replace(/\.?0+e/, 'e') : rounded.toString();
}

function responseText(value: number | null): string {
  if (value === null) return '-';
  const deviation = value - 1;
  if (deviation === 0) return '1';
  // enough digits to show the deviation itself
  const digits = Math.min(17, Math.max(5, Math.ceil(-Math.log10(Math.abs(deviation))) + 3));
  return Number(value.toPrecision(digits)).toString();
}

function distributionLine(name: string, d: DistributionSummary, asResponse: boolean): string {
  const show = asResponse ? responseText : (v: number | null) => short(v);
  const q = d.quantiles;
  return `${name.padEnd(22)}n ${d.count}  mean ${show(d.mean)}  rms ${short(d.rms)}  ` +
    `p01 ${show(q.p01)}  p16 ${show(q.p16)}  p50 ${show(q.p50)}  p84 ${show(q.p84)}  p99 ${show(q.p99)}  max ${show(d.max)}`;
}

function binTable(title: string, bins: BinReport[]): string[] {
  const rows = bins.filter((b) => b.referenceJets > 0 || b.candidateJets > 0);
  if (rows.length === 0) return [];
  // the response as its deviation from 1, which is what differs between bins
  const cells = (values: string[]) => '  ' + values[0].padEnd(12) + values.slice(1).map((v) => v.padStart(11)).join('');
  const lines = [cells([title, 'ref jets', 'eff', 'agree', 'fake rate', 'resp-1 p50', 'resp rms', 'ΔR p50', 'ΔR p99'])];
  for (const b of rows) {
    const range = b.high === null ? `>= ${b.low}` : `${b.low}-${b.high}`;
    const p50 = b.response.quantiles.p50;
    lines.push(cells([range, String(b.referenceJets), percent(b.efficiency), percent(ratio(b.agreeing, b.referenceJets)), percent(b.fakeRate),
      p50 === null ? '-' : short(p50 - 1, 3), short(b.response.rms, 3), short(b.deltaR.quantiles.p50, 3), short(b.deltaR.quantiles.p99, 3)]));
  }
  return lines;
}

/** jets listed per worst event in the terminal text */
const WORST_JETS_SHOWN = 4;

function jetText(jet: { pt: number; y: number; phi: number } | null): string {
  return jet === null ? 'none' : `pt ${jet.pt.toFixed(2)} y ${jet.y.toFixed(3)} phi ${jet.phi.toFixed(3)}`;
}

/** The report as terminal text (diagnostics go to stderr, this goes to stdout). */
export function formatValidationReport(report: ValidationReport): string {
  const e = report.events;
  const j = report.jets;
  const t = report.tolerance;
  const lines: string[] = [];
  lines.push(`tolerance: match ΔR < ${t.matchR}, agree when |pt ratio - 1| <= ${t.ptTol} and ΔR <= ${t.angleTol}, jets above ${t.ptMin} GeV`);
  lines.push(`events:   ${e.valid} valid, ${e.agreeing} agree (${percent(e.agreeingFraction)}), ${e.disagreeing} disagree` +
    ` (${e.missingFromCandidate} missing from the candidate, ${e.invalidInCandidate} invalid in the candidate only);` +
    ` ${e.invalidInEvents} invalid in EVENTS, not compared`);
  lines.push(`jets:     reference ${j.referenceAbove}, matched ${j.matched} (efficiency ${percent(j.efficiency)}),` +
    ` agreeing ${j.agreeing} (${percent(j.agreeingFraction)}); candidate ${j.candidateAbove},` +
    ` extra ${j.extraCandidates} (fake rate ${percent(j.fakeRate)}, of which unmatched ${j.unmatchedCandidates})`);
  lines.push(distributionLine('pt response (c/r)', report.response, true));
  lines.push(distributionLine('ΔR', report.deltaR, false));
  const pt = binTable('pt [GeV]', report.byReferencePt);
  if (pt.length > 0) lines.push('by reference pt:', ...pt);
  const eta = binTable('|η|', report.byAbsEta);
  if (eta.length > 0) lines.push('by reference |η|:', ...eta);
  for (const [kind, problem] of Object.entries(report.problems)) {
    lines.push(`${kind}: ${problem.count}${problem.examples.length > 0 ? `, e.g. ${problem.examples.slice(0, 3).join('; ')}` : ''}`);
  }
  if (report.worstEvents.length > 0) {
    lines.push(`worst events (${report.worstEvents.length}), the jets that do not agree:`);
    for (const w of report.worstEvents) {
      const count = (status: JetDisagreement['status']) => w.jets.filter((d) => d.status === status).length;
      const parts = [[count('unmatched'), 'unmatched'], [count('outside tolerance'), 'outside tolerance'], [count('extra'), 'extra']]
        .filter(([n]) => (n as number) > 0).map(([n, what]) => `${n} ${what}`);
      lines.push(`  event ${w.event}: ${parts.join(', ')}`);
      for (const d of w.jets.slice(0, WORST_JETS_SHOWN)) {
        const label = d.referenceJet !== null ? `ref jet ${d.referenceJet}` : `candidate jet ${d.candidateJet}`;
        const numbers = d.ptRatio !== null ? `  pt ratio ${responseText(d.ptRatio)}  ΔR ${short(d.deltaR, 3)}` : '';
        lines.push(`    ${`${label} ${d.status}`.padEnd(31)}ref ${jetText(d.reference).padEnd(32)}candidate ${jetText(d.candidate).padEnd(32)}${numbers}`.trimEnd());
      }
      if (w.jets.length > WORST_JETS_SHOWN) lines.push(`    ... and ${w.jets.length - WORST_JETS_SHOWN} more (all in the JSON report)`);
    }
  }
  return lines.join('\n') + '\n';
}
