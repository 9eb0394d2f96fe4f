// The contract between jetlag and an outside clustering program (`--engine exec:COMMAND`): the
// program reads an event stream on its stdin and writes a jets stream on its stdout, both in
// the project's own file format (proto/jetlag.proto, proto/README.md "A program as an engine").
//
//   jetlag -> program   header   FileHeader, kind events, the grid, and `settings` (p, R,
//                                ptMin, threshold, recombination): the program needs no options
//                       events   one EventRecord per event: towers that passed validation,
//                                binned, above the threshold, in increasing flat index (the
//                                order of spec section 4), never raw deposits, never an error
//   program -> jetlag   header   FileHeader, kind jets, the same grid and settings; written as
//                                soon as the program has read jetlag's header, before any event
//                       answers  exactly one JetsRecord per event, in the order sent, each with
//                                the program's own cluster_time_ns, flushed after each
//
// API
//   encodeStreamHeader(grid, settings, producer, label): Uint8Array   delimited header record
//   encodeStreamEvent(event, towerIndex, towerEt, threshold): Uint8Array
//       the delimited EventRecord of one valid event: selects and orders the towers here
//   checkProgramHeader(bytes, grid, settings): { problem } | { engineName }   what is wrong
//       with the program's header, or the name it gives itself (settings.engine) when it fits
//   readProgramAnswer(bytes, expectedEvent, inFlight): ProgramAnswer
//       one answer record checked against the event that is due; `inFlight` are the events
//       sent and not yet answered (to tell an answer out of order from one never asked for)
//
// Nothing the program writes is trusted: sizes are capped by the record framer
// (input/record-reader.ts) before any of this sees a record, and every problem here is one
// line of text for the caller to put a program, an event and a byte offset in front of.

import { selectTowers } from '../clustering/grid.js';
import { encodeEventRecord } from '../formats/event-codec.js';
import { decodeFileHeader, encodeFileHeader, looksLikeFileHeader, type JetsFileSettings } from '../formats/file-header.js';
import { decodeJetsRecord, type DecodedJets } from '../formats/jets-codec.js';
import { delimit, ProtoWriter } from '../formats/wire.js';
import { leadingEventNumber } from '../input/record-reader.js';
import type { ClusterSettings, Grid } from '../types.js';

/** The settings the program's header must repeat (its `engine` text is its own). */
const SETTING_KEYS = ['p', 'radius', 'ptMin', 'threshold', 'recombination'] as const;

export function encodeStreamHeader(grid: Grid, settings: ClusterSettings, producer: string, label: string): Uint8Array {
  const streamSettings: JetsFileSettings = { ...settings, engine: '' };
  return delimit(encodeFileHeader({ kind: 'events', grid, producer, label, settings: streamSettings }));
}

const eventWriter = new ProtoWriter(16384);

/** The delimited record of one valid event, towers as the program is to take them. */
export function encodeStreamEvent(event: number, towerIndex: Int32Array, towerEt: Float64Array, threshold: number): Uint8Array {
  const selected = selectTowers(towerIndex, towerEt, threshold);
  return delimit(encodeEventRecord({ event, towerIndex: selected.towerIndex, towerEt: selected.towerEt }, eventWriter));
}

function describeSetting(key: (typeof SETTING_KEYS)[number], value: unknown): string {
  return `${key} ${String(value)}`;
}

/** The name the program gives itself when its header is a jets header on our grid with our settings. */
export function checkProgramHeader(bytes: Uint8Array, grid: Grid, settings: ClusterSettings): { problem: string } | { engineName: string } {
  let header;
  try {
    header = decodeFileHeader(bytes);
  } catch (error) {
    return { problem: `its first record is not a usable jets file header: ${(error as Error).message}` };
  }
  if (header.kind !== 'jets') return { problem: `its header says kind ${header.kind}, expected jets` };
  const g = header.grid;
  if (g.etaMin !== grid.etaMin || g.etaMax !== grid.etaMax || g.etaBins !== grid.etaBins || g.phiBins !== grid.phiBins) {
    return { problem: `its header has grid eta [${g.etaMin}, ${g.etaMax}) x ${g.etaBins}, phi x ${g.phiBins}; the stream's is eta [${grid.etaMin}, ${grid.etaMax}) x ${grid.etaBins}, phi x ${grid.phiBins}` };
  }
  const theirs = header.settings!;
  for (const key of SETTING_KEYS) {
    // Object.is: a program that writes -0 or NaN for a setting did not copy ours
    if (!Object.is(theirs[key], settings[key])) {
      return { problem: `its header has ${describeSetting(key, theirs[key])}; the stream asked for ${describeSetting(key, settings[key])}` };
    }
  }
  return { engineName: theirs.engine };
}

export type ProgramAnswer =
  | { ok: true; answer: DecodedJets }
  | { ok: false; problem: string };

/**
 * One answer record against the event that is due. A proto3 writer leaves event 0 out, so a
 * record without field 1 answers event 0 and nothing else.
 */
export function readProgramAnswer(bytes: Uint8Array, expectedEvent: number, inFlight: ArrayLike<number>): ProgramAnswer {
  let answer: DecodedJets;
  if (looksLikeFileHeader(bytes)) return { ok: false, problem: `wrote a file header where the jets record of event ${expectedEvent} was due` };
  try {
    answer = decodeJetsRecord(bytes);
  } catch (error) {
    return { ok: false, problem: `not a jets record: ${(error as Error).message}` };
  }
  if (answer.event !== expectedEvent) {
    if (leadingEventNumber(bytes) === null && answer.event === 0) {
      return { ok: false, problem: `the jets record has no event number (field 1); event ${expectedEvent} was due` };
    }
    for (let k = 0; k < inFlight.length; k++) {
      if (inFlight[k] === answer.event) return { ok: false, problem: `answered event ${answer.event} where event ${expectedEvent} was due (out of order, or event ${expectedEvent} skipped)` };
    }
    return { ok: false, problem: `answered event ${answer.event}, which was not sent to it (event ${expectedEvent} was due)` };
  }
  if (answer.problem !== '') return { ok: false, problem: `the jets record is incomplete: ${answer.problem}` };
  return { ok: true, answer };
}
