// The table of cell offsets the ordered search walks (search.ts searchOrdered): every offset
// (offDr, offDc) whose centre distance is within a limit, sorted by that distance (offDist, a
// lower bound on the distance of any two jets at their cells' centres), nearest first, with its
// flat step in the padded rows (offStep, layout.ts). Built once per engine.

import { etaBins, phiBins, offDr, offDc, offDist, offPerm, offScratch, offTmpI, offTmpF, offStep,
  OFFSET_LIMIT, padStride, reservePadding, getF64, setF64, getI32, setI32 } from './layout';
import { reach, etaMin, etaPitch, phiPitch } from './settings';
import { sortPermutation } from './sort';
import { BOUND_WIDENING, CENTRE_ROUNDING } from './search-constants';

/** offsets in the table: offDr..offStep[0..offsetCount) */
export let offsetCount: i32 = 0;
/** every offset whose centre distance is at most this is in the table (Infinity: all are) */
export let offsetReach: f64 = 0;
/** the typical nearest-neighbour distance on a full grid (a cell pitch, a little more) */
export let nearGuess: f64 = 0;

/** Called once per engine, after configure(); reserves the padded rows the offsets reach (false
 * when memory cannot grow). */
export function buildOffsets(): bool {
  const pitch = max<f64>(etaPitch, phiPitch);
  const dcLow = -((phiBins - 1) >> 1);
  const dcHigh = phiBins >> 1;
  let limit = reach + 3 * pitch;
  let rows = 0;
  let count = 0;
  for (;;) {
    rows = <i32>min<f64>(<f64>(etaBins - 1), ceil<f64>(limit / etaPitch));
    count = 0;
    for (let dr = -rows; dr <= rows; dr++) {
      for (let dc = dcLow; dc <= dcHigh; dc++) {
        if (dr == 0 && dc == 0) continue;
        if (centreDistance(dr, dc) <= limit) count++;
      }
    }
    if (count <= OFFSET_LIMIT) break;
    limit *= 0.75;
  }
  const complete = limit / etaPitch >= <f64>(etaBins - 1) && limit / phiPitch >= <f64>(phiBins >> 1);
  offsetReach = complete ? Infinity : limit;
  let n = 0;
  for (let dr = -rows; dr <= rows; dr++) {
    for (let dc = dcLow; dc <= dcHigh; dc++) {
      if (dr == 0 && dc == 0) continue;
      const dist = centreDistance(dr, dc);
      if (dist > limit) continue;
      setI32(offTmpI, n, (dr << 16) | (dc & 0xffff));
      setF64(offTmpF, n, dist);
      setI32(offPerm, n, n);
      n++;
    }
  }
  sortPermutation(offPerm, offScratch, n, offTmpF, 0);
  // centres can sit a few ulp off the ideal lattice: shave the bound a little
  const ulpScale = CENTRE_ROUNDING * (abs<f64>(etaMin) + abs<f64>(etaMin + etaPitch * <f64>etaBins) + 8);
  let rowReach = 0;
  let colReach = 0;
  for (let o = 0; o < n; o++) {
    const from = getI32(offPerm, o);
    const packed = getI32(offTmpI, from);
    const dr = packed >> 16;
    const dc = <i32>(<i16>(packed & 0xffff));
    setI32(offDr, o, dr);
    setI32(offDc, o, dc);
    setF64(offDist, o, getF64(offTmpF, from) * (1 - BOUND_WIDENING) - 4 * ulpScale);
    rowReach = max<i32>(rowReach, abs<i32>(dr));
    colReach = max<i32>(colReach, abs<i32>(dc));
  }
  offsetCount = n;
  nearGuess = 1.2 * max<f64>(etaPitch, phiPitch);
  if (!reservePadding(rowReach, colReach)) return false;
  for (let o = 0; o < n; o++) setI32(offStep, o, getI32(offDr, o) * padStride + getI32(offDc, o));
  return true;
}

/** The distance between the centres of two cells dr rows and dc columns apart (phi the short way). */
function centreDistance(dr: i32, dc: i32): f64 {
  const adc = abs<i32>(dc);
  const ay = <f64>abs<i32>(dr) * etaPitch;
  const ap = <f64>min<i32>(adc, phiBins - adc) * phiPitch;
  return sqrt<f64>(ay * ay + ap * ap);
}
