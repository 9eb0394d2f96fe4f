// Constants of the nearest-neighbour searches: how many listed jets (cells.ts driftList) the
// searches look at directly, and the margins that keep every bound on the safe side of rounding.
//
// The margins only ever widen what a search looks at (more cells, a later stop); none decides a
// pair, which is done by the exact key of clustering-spec.md section 4. One double operation
// rounds by at most 2^-53 (about 1.1e-16) relative, and the bounds below take a handful of them,
// so a relative error of about 1e-15 covers them; each margin is chosen a million times larger
// or more, since it costs no more than a few extra cells near the edge of a window.

// the listed jets are looked at directly while at most this many, else windows and bounds widen
// by the drift. Measured: without the list anti-kt at 3200 towers took 4.9 ms, with it 2.9 ms;
// 12, 32 or 64 made no measurable difference for windows; searches from scratch did better
// widening once more than about 8 are listed (959 against 1096 µs, anti-kt at 850 towers)
// @ts-ignore: decorator
@inline export const LIST_MAX: i32 = 32;
// @ts-ignore: decorator
@inline export const LIST_MAX_SEARCH: i32 = 8;

/**
 * The reach, dR2 <= R*R*(1 + REACH_WIDENING) (settings.ts reach2): the pairs a search seeks. A
 * pair (i, j) can be the step's choice only when its measure (min(w_i, w_j) * dR2) * invR2 is at
 * most the smaller of the two jets' beams, min(w_i, w_j), that is dR2 * invR2 <= 1 before
 * rounding; R*R, invR2 = 1 / (R*R) and the measure's two products round once each, so every such
 * pair has dR2 <= R*R*(1 + 4 * 2^-53). Weights
 * in the safe range (kinematics.ts WIDE_LOW, WIDE_HIGH) keep the products away from underflow
 * and overflow, where that argument would fail. Also the engine's contract for its first
 * neighbour table (host/clustering/engine.ts firstNeighbourTable).
 */
// @ts-ignore: decorator
@inline export const REACH_WIDENING: f64 = 1e-9;

/**
 * Relative widening of a distance or a count of cells computed for choosing cells (the reach's
 * square root, the half diagonal of a cell, a window's rows and columns from the pitch): each is
 * a few rounded products, square roots and quotients (about 1e-15 relative), and the pitch the
 * engine divides by is (etaMax - etaMin) / etaBins, itself rounded.
 */
// @ts-ignore: decorator
@inline export const BOUND_WIDENING: f64 = 1e-9;

/**
 * Absolute widening, in y and phi, of a bound made from differences of coordinates (a jet's
 * offset from its cell centre, the reach): the host rounds each centre, etaMin + (i + 0.5) *
 * pitch, to the double nearest, a few ulp of a coordinate off the ideal lattice. An ulp of a
 * coordinate below 40 is at most 2^-47 (about 7e-15), so 1e-12 covers a hundred of them; it also
 * keeps a bound positive where a relative margin vanishes (a best at dR2 = 0).
 */
// @ts-ignore: decorator
@inline export const COORDINATE_WIDENING: f64 = 1e-12;

/** Absolute widening, in cells, of a window's first and last row and column (windows.ts): covers
 * a jet whose bound falls exactly on a cell boundary, where ceil and floor would cut it off. */
// @ts-ignore: decorator
@inline export const CELL_WIDENING: f64 = 1e-9;

/**
 * How far past the best so far a search keeps looking, relative to its distance sqrt(dR2): an
 * equal key, which the smaller jet index then wins, can come from a slightly larger dR2, since
 * the key (w * dR2) * invR2 rounds twice (2 * 2^-53 relative) and the square root once more.
 * Larger than BOUND_WIDENING, so that it also covers the offsets' shaved lower bounds.
 */
// @ts-ignore: decorator
@inline export const EQUAL_KEY_WIDENING: f64 = 1e-8;

/**
 * How far an offset's centre distance (offsets.ts offDist) is shaved so that it stays a lower
 * bound for any two jets at their cells' centres: relatively by BOUND_WIDENING for its own
 * rounding, and by 4 * CENTRE_ROUNDING * (the largest |coordinate| + 8), since two centres each
 * sit up to about two ulp (2.2e-16 * |x| each) off the lattice in y and in phi; 1e-15 is 4.5 ulp
 * per unit of magnitude, and the 8 bounds phi (< 2 pi).
 */
// @ts-ignore: decorator
@inline export const CENTRE_ROUNDING: f64 = 1e-15;
