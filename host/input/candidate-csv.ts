// Candidate CSV of jets (candidate-reader.ts): a header, then one row per jet, rows of an
// event together. The groomed pt and mass columns `jetlag export` writes are read too
// (candidate-csv-groomed.ts).

import { InputError } from '../errors.js';
import { GROOMED_CSV_SUFFIXES } from '../formats/groomed-csv-columns.js';
import { EVENT_CSV_COLUMNS, EVENT_CSV_SUFFIX } from '../formats/event-csv-columns.js';
import type { CandidateEvent } from './candidate-reader.js';
import { CsvGroomedColumns } from './candidate-csv-groomed.js';
import { emptyEvent, JetColumns, MAX_CANDIDATE_JETS_PER_EVENT, quote, type Line } from './candidate-lines.js';

/** the third: `jetlag export` of jets with pileup values (spec part two); its columns after m are not compared */
export const CANDIDATE_CSV_HEADERS = ['event,pt,y,phi', 'event,pt,y,phi,m', 'event,pt,y,phi,m,ghosts,area,ptRaw,rho,etCut,killed,subtractedAway'] as const;

const EVENT_NUMBER = /^[0-9]+$/;
const DECIMAL = /^[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?$/;

export async function* csvEvents(input: AsyncGenerator<Line>, label: string, maxJetsPerEvent = MAX_CANDIDATE_JETS_PER_EVENT): AsyncGenerator<CandidateEvent> {
  const columns = new JetColumns();
  let fields = 0;
  /** the per-event columns at the end of an exported row: not compared, not checked */
  let eventColumns = 0;
  let columnNames: string[] = [];
  let groomed = new CsvGroomedColumns([], 0);
  let headerSeen = false;
  let current: number | null = null;
  let currentOffset = 0;
  let currentError = '';
  let blankOffset = -1;
  let blankLine = 0;
  const finish = (): CandidateEvent => {
    let out: CandidateEvent;
    if (currentError !== '') {
      out = emptyEvent(current, currentOffset, currentError);
      groomed.clear();
    } else {
      out = columns.take(current!, currentOffset, columnNames[4] === 'm');
      const groomedColumns = groomed.take();
      if (groomedColumns) out.groomed = groomedColumns;
    }
    columns.count = 0;
    currentError = '';
    return out;
  };
  for await (const { text: raw, offset, number } of input) {
    let text = raw;
    if (!headerSeen) {
      if (text.startsWith('\ufeff')) text = text.slice(1);
      // `jetlag export` ends the header with the event's columns (event-csv-columns.ts), after
      // the groomed columns of groomed jets (groomed-csv-columns.ts)
      eventColumns = text.endsWith(EVENT_CSV_SUFFIX) ? EVENT_CSV_COLUMNS.length : 0;
      const jetHeader = eventColumns > 0 ? text.slice(0, text.length - EVENT_CSV_SUFFIX.length) : text;
      const suffix = GROOMED_CSV_SUFFIXES.find((ending) => jetHeader.endsWith(ending)) ?? '';
      const header = CANDIDATE_CSV_HEADERS.indexOf(jetHeader.slice(0, jetHeader.length - suffix.length) as (typeof CANDIDATE_CSV_HEADERS)[number]);
      if (header < 0) {
        throw new InputError(label, `missing header: expected "${CANDIDATE_CSV_HEADERS[0]}" or "${CANDIDATE_CSV_HEADERS[1]}", got ${quote(text)}`, undefined, offset, number);
      }
      columnNames = text.split(',');
      fields = columnNames.length;
      groomed = new CsvGroomedColumns(columnNames, fields - eventColumns);
      headerSeen = true;
      continue;
    }
    if (text.length === 0) {
      if (blankOffset < 0) { blankOffset = offset; blankLine = number; }
      continue;
    }
    if (blankOffset >= 0) {
      if (current !== null) yield finish();
      throw new InputError(label, 'bad event number "" (an empty line before more rows; the rest of the file is unreadable)', undefined, blankOffset, blankLine);
    }
    const parts = text.split(',');
    if (!EVENT_NUMBER.test(parts[0]) || !Number.isSafeInteger(Number(parts[0]))) {
      if (current !== null) yield finish();
      throw new InputError(label, `bad event number ${quote(parts[0])} (the rest of the file is unreadable)`, undefined, offset, number);
    }
    const event = Number(parts[0]);
    if (event !== current) {
      if (current !== null) yield finish();
      current = event;
      currentOffset = offset;
    }
    if (currentError !== '') continue;
    if (parts.length !== fields) {
      currentError = `row at line ${number}, byte ${offset} has ${parts.length} fields, expected ${fields}`;
      continue;
    }
    let bad = -1;
    for (let k = 1; k < fields - eventColumns; k++) {
      if (!DECIMAL.test(parts[k]) || !Number.isFinite(Number(parts[k]))) { bad = k; break; }
    }
    if (bad > 0) {
      currentError = `row at line ${number}, byte ${offset}: bad ${columnNames[bad]} ${quote(parts[bad])}`;
      continue;
    }
    if (columns.count === maxJetsPerEvent) {
      currentError = `row at line ${number}, byte ${offset}: more than ${maxJetsPerEvent} jets in one event, more than any grid has cells`;
      continue;
    }
    columns.push(Number(parts[1]), Number(parts[2]), Number(parts[3]), columnNames[4] === 'm' ? Number(parts[4]) : 0);
    groomed.push(parts);
  }
  if (!headerSeen) throw new InputError(label, `missing header: expected "${CANDIDATE_CSV_HEADERS[0]}"`, undefined, 0, 1);
  if (current !== null) yield finish();
}
