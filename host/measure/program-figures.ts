// What a run with an engine program (`run --engine exec:…`) adds to the tally and the summary:
// the events the program failed on, its restarts, and tolerance mode's sums. A program's own
// time goes into the usual service histogram; jetlag's round trip into RunTally.roundTrip.

/** An event the program failed on (it exited, hung, broke the contract or refused the event). */
export interface FailedEvent {
  event: number;
  /** exited, timed-out, malformed, refused, engine-stopped */
  reason: string;
  message: string;
}

/** Tolerance mode's sums over the checked events (spec section 7); they add over batches, workers and shards. */
export interface ToleranceFigures {
  checked: number;
  agreeing: number;
  /** reference jets with pt >= ptMin, and of those matched to a candidate jet */
  referenceAbove: number;
  matched: number;
  /** candidate jets with pt >= ptMin, and of those matched to no reference jet */
  candidateAbove: number;
  unmatched: number;
  /** pt_cand / pt_ref over matched reference jets above ptMin: sum and count, for the mean */
  responseSum: number;
  responseCount: number;
}

export function emptyToleranceFigures(): ToleranceFigures {
  return { checked: 0, agreeing: 0, referenceAbove: 0, matched: 0, candidateAbove: 0, unmatched: 0, responseSum: 0, responseCount: 0 };
}

export function addToleranceFigures(into: ToleranceFigures, other: ToleranceFigures): void {
  into.checked += other.checked;
  into.agreeing += other.agreeing;
  into.referenceAbove += other.referenceAbove;
  into.matched += other.matched;
  into.candidateAbove += other.candidateAbove;
  into.unmatched += other.unmatched;
  into.responseSum += other.responseSum;
  into.responseCount += other.responseCount;
}

/** The summary's tolerance block: compare's figures, and the sums they come from (a shard merge adds those). */
export interface ToleranceSummary extends ToleranceFigures {
  /** agreeing / checked */
  agreement: number | null;
  /** matched / reference jets above ptMin */
  efficiency: number | null;
  /** unmatched / candidate jets above ptMin */
  fakeRate: number | null;
  /** mean pt_cand / pt_ref of matched jets above ptMin */
  response: number | null;
}

/** The sums of a summary's tolerance block, for a shard merge. */
export function toleranceFiguresOf(summary: ToleranceSummary): ToleranceFigures {
  const { checked, agreeing, referenceAbove, matched, candidateAbove, unmatched, responseSum, responseCount } = summary;
  return { checked, agreeing, referenceAbove, matched, candidateAbove, unmatched, responseSum, responseCount };
}

export function summarizeTolerance(figures: ToleranceFigures): ToleranceSummary {
  const ratio = (a: number, b: number) => (b > 0 ? a / b : null);
  return {
    ...figures,
    agreement: ratio(figures.agreeing, figures.checked),
    efficiency: ratio(figures.matched, figures.referenceAbove),
    fakeRate: ratio(figures.unmatched, figures.candidateAbove),
    response: ratio(figures.responseSum, figures.responseCount),
  };
}
