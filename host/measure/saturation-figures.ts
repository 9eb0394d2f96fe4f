// The offered and sustained rates of an open loop: of one run (RunTally.recordRates), read back
// from a summary of an earlier version, and of shards merged; and the words for why a run
// counts as saturated.

/**
 * A sustained rate this far below the offered one counts as saturation: a run that keeps up
 * still falls short by its last event's latency over the run's length, and Poisson arrivals
 * wander; 5 % leaves room for both on runs of a second or more.
 */
export const SATURATION_SHORTFALL = 0.05;

export interface Saturation {
  /** the rate the schedule offered; merged shards: the sum of theirs */
  offeredHz: number;
  /** the rate results came back, as sustainedBasis says */
  sustainedHz: number;
  /** rateFellShort or backlogGrew */
  saturated: boolean;
  /** the sustained rate fell more than SATURATION_SHORTFALL short of the offered one (merged: in a shard) */
  rateFellShort: boolean;
  /** the backlog of due events grew through the run (merged: in a shard) */
  backlogGrew: boolean;
  /** the runs whose offered rates offeredHz adds: 1 for one run, the shards' count for a merge */
  shards: number;
  /** how sustainedHz was reached */
  sustainedBasis: string;
}

/** One run's sustained rate: the open-loop feed fits a straight line to the results' return times. */
export const SUSTAINED_BY_RETURN_FIT = "one over the slope of a line fitted to the results' return times";
/** A merge's sustained rate: the same basis as the merged throughput. */
export const SUSTAINED_BY_LONGEST_SHARD = "all shards' events over the longest shard's wall time, as throughput";

function fellShort(offeredHz: number, sustainedHz: number): boolean {
  return sustainedHz < offeredHz * (1 - SATURATION_SHORTFALL);
}

/** One run's rates and the verdicts on them. */
export function runSaturation(offeredHz: number, sustainedHz: number, backlogGrew: boolean): Saturation {
  const rateFellShort = fellShort(offeredHz, sustainedHz);
  return { offeredHz, sustainedHz, saturated: rateFellShort || backlogGrew, rateFellShort, backlogGrew, shards: 1, sustainedBasis: SUSTAINED_BY_RETURN_FIT };
}

/**
 * A summary's saturation as this version keeps it. Summaries of version 2 hold only the rates
 * and the verdict: the rate's shortfall is judged again from them, and a saturated run whose
 * rate did not fall short can only have had a growing backlog (when both fired, version 2 does
 * not say whether the backlog grew too: taken as not).
 */
export function readSaturation(stored: Partial<Saturation> & { offeredHz: number; sustainedHz: number; saturated: boolean }): Saturation {
  const rateFellShort = stored.rateFellShort ?? fellShort(stored.offeredHz, stored.sustainedHz);
  return {
    offeredHz: stored.offeredHz,
    sustainedHz: stored.sustainedHz,
    saturated: stored.saturated,
    rateFellShort,
    backlogGrew: stored.backlogGrew ?? (stored.saturated && !rateFellShort),
    shards: stored.shards ?? 1,
    sustainedBasis: stored.sustainedBasis ?? SUSTAINED_BY_RETURN_FIT,
  };
}

/**
 * Shards of one job array run side by side, each offered its own rate: the farm is offered the
 * sum. What it sustained is all events over the longest shard's wall time (the throughput's
 * basis: a sum of the shards' fitted rates would claim more than came back when shards start
 * at different times). Whether it was saturated stays each shard's own verdict, on its fitted
 * rate and backlog: the throughput basis counts the start and the last event's latency as time
 * not served, so it would find short runs saturated that kept up.
 */
export function mergedSaturation(shards: readonly Saturation[], eventsRead: number, longestWallSeconds: number): Saturation | null {
  if (shards.length === 0) return null;
  let offeredHz = 0;
  let shardCount = 0;
  let rateFellShort = false;
  let backlogGrew = false;
  for (const shard of shards) {
    offeredHz += shard.offeredHz;
    shardCount += shard.shards;
    rateFellShort ||= shard.rateFellShort;
    backlogGrew ||= shard.backlogGrew;
  }
  return {
    offeredHz,
    sustainedHz: longestWallSeconds > 0 ? eventsRead / longestWallSeconds : 0,
    saturated: rateFellShort || backlogGrew,
    rateFellShort,
    backlogGrew,
    shards: shardCount,
    sustainedBasis: SUSTAINED_BY_LONGEST_SHARD,
  };
}

/** Why a saturated run counts as such, by the cause that fired (summaries of either version). */
export function saturationCause(saturation: Partial<Saturation> & { offeredHz: number; sustainedHz: number; saturated: boolean }): string {
  const { rateFellShort, backlogGrew, shards } = readSaturation(saturation);
  // merged shards: each was judged on its own rates (mergedSaturation)
  const where = shards > 1 ? 'in a shard, ' : '';
  const short = `${where}the sustained rate fell more than ${SATURATION_SHORTFALL * 100} % short of the offered one`;
  if (rateFellShort && backlogGrew) return `${short}, and the queue grew through the run`;
  if (rateFellShort) return short;
  return `${where}the queue of due events grew through the run`;
}

/** "200 Hz summed over 2 shards" for merged shards, "100 Hz" for one run. */
export function offeredText(offeredHz: string, shards: number): string {
  return shards > 1 ? `${offeredHz} Hz summed over ${shards} shards` : `${offeredHz} Hz`;
}
