// The JSON-line form of one event's jets, shared by `jetlag cluster --format jsonl` and
// `jetlag export`:
//   {"event":n,"jets":[{"pt":…,"y":…,"phi":…,"m":…,"px":…,"py":…,"pz":…,"E":…,"n":…,"towers":[…]}]}
//   {"event":n,"error":"…"}                       for an invalid event
// Jets in the order given (the spec's output order). Numbers are written with String(x), the
// shortest text that reads back as the same double, so lines round-trip bit for bit; -0 is
// written as -0. JSON has no NaN or infinity: such a value is written as null. "towers" (the
// flat tower indices of the constituents, increasing) is left out when the jets carry no
// constituent indices.
// Jets with pileup values (spec part two) add, per event, "rho", "etCut", "killed" and
// "subtractedAway" after "event", and per jet "ghosts", "area" and "ptRaw" after "n":
//   {"event":n,"rho":…,"etCut":…,"killed":…,"subtractedAway":…,"jets":[{…,"n":…,"ghosts":…,"area":…,"ptRaw":…,"towers":[…]}]}
// Groomed jets (spec section 12) add per jet, after those, a "trim" object (the trimmed jet and
// its kept "subjets") and a "softdrop" object (the groomed jet, "zg" and "Rg"); "n" counts the
// towers each keeps:
//   "trim":{"pt":…,"y":…,"phi":…,"m":…,"px":…,"py":…,"pz":…,"E":…,"n":…,"subjets":…}
//   "softdrop":{"pt":…,"y":…,"phi":…,"m":…,"px":…,"py":…,"pz":…,"E":…,"n":…,"zg":…,"Rg":…}
// `jetlag export` of a jets file adds, per event, "cluster_time_ns" (0 when not measured) and
// "towers" (towers of the event that entered clustering; null when the file does not record
// it) right after "event"; `jetlag cluster --format jsonl` writes neither, so that its output
// does not change from run to run:
//   {"event":n,"cluster_time_ns":…,"towers":…,"jets":[…]}
//
// API
//   formatJetsLine(event, jets, withTowers?, figures?): string      one line, without the newline
//   formatErrorLine(event, error): string
//   jsonNumber(x): string

import type { GroomedFourVectors, JetSet } from '../types.js';

export function jsonNumber(x: number): string {
  if (!Number.isFinite(x)) return 'null';
  return Object.is(x, -0) ? '-0' : String(x);
}

export function formatErrorLine(event: number, error: string): string {
  return `{"event":${event},"error":${JSON.stringify(error)}}`;
}

/** a groomed jet's fields, in the plain jet's order and names */
function groomedFields(rows: GroomedFourVectors, k: number): string {
  return `"pt":${jsonNumber(rows.pt[k])},"y":${jsonNumber(rows.rapidity[k])},"phi":${jsonNumber(rows.phi[k])},"m":${jsonNumber(rows.mass[k])},` +
    `"px":${jsonNumber(rows.px[k])},"py":${jsonNumber(rows.py[k])},"pz":${jsonNumber(rows.pz[k])},"E":${jsonNumber(rows.energy[k])},"n":${rows.towerCount[k]}`;
}

/** an event's figures from its jets record, written by `jetlag export` */
export interface EventLineFigures {
  clusterTimeNs: number;
  /** null: the record does not say */
  eventTowers: number | null;
}

export function formatJetsLine(event: number, jets: JetSet, withTowers = jets.towers.length > 0 || jets.count === 0, figures?: EventLineFigures): string {
  const parts: string[] = [];
  const pileup = jets.pileup;
  for (let k = 0; k < jets.count; k++) {
    let line =
      `{"pt":${jsonNumber(jets.pt[k])},"y":${jsonNumber(jets.rapidity[k])},"phi":${jsonNumber(jets.phi[k])},"m":${jsonNumber(jets.mass[k])},` +
      `"px":${jsonNumber(jets.px[k])},"py":${jsonNumber(jets.py[k])},"pz":${jsonNumber(jets.pz[k])},"E":${jsonNumber(jets.energy[k])},` +
      `"n":${jets.towerCount[k]}`;
    if (pileup) line += `,"ghosts":${pileup.ghosts[k]},"area":${jsonNumber(pileup.area[k])},"ptRaw":${jsonNumber(pileup.ptRaw[k])}`;
    if (jets.trim) line += `,"trim":{${groomedFields(jets.trim, k)},"subjets":${jets.trim.subjets[k]}}`;
    if (jets.softDrop) line += `,"softdrop":{${groomedFields(jets.softDrop, k)},"zg":${jsonNumber(jets.softDrop.zg[k])},"Rg":${jsonNumber(jets.softDrop.deltaRg[k])}}`;
    if (withTowers) {
      const start = jets.towerStart[k];
      line += `,"towers":[${Array.prototype.join.call(jets.towers.subarray(start, start + jets.towerCount[k]), ',')}]`;
    }
    parts.push(line + '}');
  }
  const timeAndTowers = figures ? `"cluster_time_ns":${figures.clusterTimeNs},"towers":${figures.eventTowers ?? 'null'},` : '';
  const perEvent = timeAndTowers + (pileup
    ? `"rho":${jsonNumber(pileup.rho)},"etCut":${jsonNumber(pileup.etCut)},"killed":${pileup.killed},"subtractedAway":${pileup.subtractedAway},`
    : '');
  return `{"event":${event},${perEvent}"jets":[${parts.join(',')}]}`;
}
