// The project's one seeded random generator, shared by the demo-event generator, the Poisson
// arrivals, the --check sample and the tests, so that a seed means the same thing everywhere.
// The demo files depend on its exact sequence: changing it changes every generated file.

/** murmur3's 32-bit finaliser (from memory): spreads every input bit over the whole word. */
export function mix32(word: number): number {
  let z = word >>> 0;
  z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
  z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
  return (z ^ (z >>> 16)) >>> 0;
}

/** 2^32, to turn a 32-bit word into a fraction in [0, 1) */
const WORD_RANGE = 4294967296;

/** A seeded generator (SplitMix32-style: a golden-ratio counter through mix32), uniform in [0, 1). */
export function makeRandom(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x9e3779b9) >>> 0;
    return mix32(state) / WORD_RANGE;
  };
}

/** A 32-bit word hashed to a fraction in [0, 1), for draws keyed by a number instead of a sequence. */
export function hashToUnit(word: number): number {
  return mix32(word) / WORD_RANGE;
}
