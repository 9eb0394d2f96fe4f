// The tiles of one grooming re-clustering (groom-sequence.ts): a small grid of square tiles of
// side `tileSide` over the box that the jet's towers span, in y and in phi measured from the
// first tower the short way round (jetLocalPhi), each tile a doubly linked list of the live jets
// in it (tileHead, tileNext, tilePrev; jetTile). Used only to choose which jets a search looks
// at: distances are always the spec's deltaR2 of the jets' own y and phi.
//
// Why a jet within `tileSide` of another lies in one of the 3 x 3 tiles around it: both
// coordinates differ by at most tileSide, tiles are at least that wide, and a merged jet's y and
// phi lie between its parents' (E-scheme: (E + pz) / (E - pz) of a sum is between the parts'
// ratios; the sum of two transverse vectors less than pi apart points between them), so every
// jet stays in the box up to rounding, which the clamp to the edge tiles absorbs. That needs the
// towers within less than pi in phi of each other; otherwise there is one tile.

import { jetY, jetPhi, jetTile, jetLocalPhi, tileHead, tileNext, tilePrev, TILE_LIMIT,
  getF64, setF64, getI32, setI32 } from './layout';
import { PI, TWO_PI } from './settings';

// a box at least this far below pi wide in phi keeps every pair's short way round inside it
// @ts-ignore: decorator
@inline const PHI_SPAN_MARGIN: f64 = 0.01;
// tiles this much wider than asked, so that rounding of (y - yLow) / tileSide never puts two
// jets within tileSide of each other two tiles apart
// @ts-ignore: decorator
@inline const SIDE_WIDENING: f64 = 1e-6;

export let tileRows: i32 = 1;
export let tileColumns: i32 = 1;
let tileSide: f64 = Infinity;
let invTileSide: f64 = 0;
let yLow: f64 = 0;
let yHigh: f64 = 0;
let phiFrom: f64 = 0;
let phiLow: f64 = 0;
let phiHigh: f64 = 0;
/** the towers lie within less than pi in phi: tiles can work */
export let tilesPossible: bool = false;

/** phi - phiFrom the short way round, in [-pi, pi] */
// @ts-ignore: decorator
@inline function localPhi(phi: f64): f64 {
  let d = phi - phiFrom;
  if (d > PI) d -= TWO_PI;
  else if (d < -PI) d += TWO_PI;
  return d;
}

/** The box of towers 0..n-1 (their jetY, jetPhi) and each one's jetLocalPhi. */
export function measureBox(n: i32): void {
  phiFrom = getF64(jetPhi, 0);
  yLow = Infinity;
  yHigh = -Infinity;
  phiLow = Infinity;
  phiHigh = -Infinity;
  for (let t = 0; t < n; t++) {
    const y = getF64(jetY, t);
    const phi = localPhi(getF64(jetPhi, t));
    setF64(jetLocalPhi, t, phi);
    yLow = min<f64>(yLow, y);
    yHigh = max<f64>(yHigh, y);
    phiLow = min<f64>(phiLow, phi);
    phiHigh = max<f64>(phiHigh, phi);
  }
  tilesPossible = phiHigh - phiLow < PI - PHI_SPAN_MARGIN;
}

/** Tiles at least `side` wide over the box (one tile when side is +Inf or tiles cannot work),
 * all empty; returns true when there is only one tile. */
export function layTiles(side: f64): bool {
  tileRows = 1;
  tileColumns = 1;
  tileSide = Infinity;
  invTileSide = 0;
  if (tilesPossible && side < Infinity) {
    const spanY = yHigh - yLow;
    const spanPhi = phiHigh - phiLow;
    const limit = <f64>(sqrt<f64>(<f64>TILE_LIMIT) - 2);
    tileSide = max<f64>(side * (1 + SIDE_WIDENING), max<f64>(spanY, spanPhi) / limit);
    invTileSide = 1 / tileSide;
    tileRows = <i32>(spanY * invTileSide) + 1;
    tileColumns = <i32>(spanPhi * invTileSide) + 1;
  }
  const tiles = tileRows * tileColumns;
  for (let t = 0; t < tiles; t++) setI32(tileHead, t, -1);
  return tiles == 1;
}

/** u cut to 0 .. count - 1 as a tile row or column (NaN gives 0) */
// @ts-ignore: decorator
@inline function tileNumber(u: f64, count: i32): i32 {
  return u >= 1 ? (u < <f64>count ? <i32>u : count - 1) : 0;
}

/** Jet j's tile: row * tileColumns + column. */
function tileOf(j: i32): i32 {
  if (tileRows * tileColumns == 1) return 0;
  const row = tileNumber(floor<f64>((getF64(jetY, j) - yLow) * invTileSide), tileRows);
  const column = tileNumber(floor<f64>((getF64(jetLocalPhi, j) - phiLow) * invTileSide), tileColumns);
  return row * tileColumns + column;
}

/** A merged jet's jetLocalPhi, from its phi. */
export function setLocalPhi(j: i32): void {
  setF64(jetLocalPhi, j, localPhi(getF64(jetPhi, j)));
}

export function insertJet(j: i32): void {
  const tile = tileOf(j);
  const head = getI32(tileHead, tile);
  setI32(jetTile, j, tile);
  setI32(tilePrev, j, -1);
  setI32(tileNext, j, head);
  if (head >= 0) setI32(tilePrev, head, j);
  setI32(tileHead, tile, j);
}

export function removeJet(j: i32): void {
  const prev = getI32(tilePrev, j);
  const next = getI32(tileNext, j);
  if (prev >= 0) setI32(tileNext, prev, next);
  else setI32(tileHead, getI32(jetTile, j), next);
  if (next >= 0) setI32(tilePrev, next, prev);
}

/** The first and last tile row and column around a jet's tile (3 x 3, cut at the grid's edges),
 * set by openAround(). */
export let aroundRowFirst: i32 = 0;
export let aroundRowLast: i32 = 0;
export let aroundColumnFirst: i32 = 0;
export let aroundColumnLast: i32 = 0;

export function openAround(j: i32): void {
  const tile = getI32(jetTile, j);
  const row = tile / tileColumns;
  const column = tile - row * tileColumns;
  aroundRowFirst = max<i32>(0, row - 1);
  aroundRowLast = min<i32>(tileRows - 1, row + 1);
  aroundColumnFirst = max<i32>(0, column - 1);
  aroundColumnLast = min<i32>(tileColumns - 1, column + 1);
}
