// One clock for every thread of a run. performance.now() counts from each thread's own start
// (a worker's origin is when the worker started), so its readings cannot be compared across
// threads; process.hrtime is one monotonic clock for the whole process but allocates a BigInt
// per reading. Each thread therefore measures, once, the offset between the two, and reads
// performance.now() plus that offset: the monotonic clock in ns, cheap to read, comparable
// between the main thread and the workers to well under a microsecond.

/** samples taken to find the offset; the one with the shortest bracket wins */
const OFFSET_SAMPLES = 16;

function measureOffsetNs(): number {
  let bestOffsetNs = 0;
  let bestBracketNs = Infinity;
  for (let k = 0; k < OFFSET_SAMPLES; k++) {
    const before = performance.now();
    const monotonicNs = Number(process.hrtime.bigint());
    const after = performance.now();
    const bracketNs = (after - before) * 1e6;
    if (bracketNs < bestBracketNs) {
      bestBracketNs = bracketNs;
      bestOffsetNs = monotonicNs - ((before + after) / 2) * 1e6;
    }
  }
  return bestOffsetNs;
}

const offsetNs = measureOffsetNs();

/**
 * Now on the process's monotonic clock (CLOCK_MONOTONIC), in ns, the same in every thread;
 * fractional (performance.now resolves below a microsecond).
 */
export function sharedClockNs(): number {
  return performance.now() * 1e6 + offsetNs;
}
