// Where the fault worker kills its own thread under JETLAG_TEST_KILL=PERMILLE:SEED: in the
// batches this seeded hash picks (about PERMILLE in 1000), after the event of the batch it
// picks has been served. A test computes the same picks to know which batches must come back failed.

function mix(value: number, seed: number): number {
  // an integer mix (multiply, shift, xor): neighbouring batches land far apart
  let h = Math.imul(value ^ Math.imul(seed, 0x27d4eb2d), 0x9e3779b1) >>> 0;
  h = Math.imul(h ^ (h >>> 15), 0x85ebca6b) >>> 0;
  return (h ^ (h >>> 13)) >>> 0;
}

/** Whether the worker thread dies while running batch number `batch` (its dispatch index). */
export function killsBatch(batch: number, perMille: number, seed: number): boolean {
  return mix(batch, seed) % 1000 < perMille;
}

/** After which of the batch's `events` (0 .. events - 1) the thread dies. */
export function killSlot(batch: number, seed: number, events: number): number {
  return mix(batch, seed + 1) % events;
}
