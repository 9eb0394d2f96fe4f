// CSV tower files (clustering-spec.md section 1): header `event,ieta,iphi,et`, then one row
// per tower.
//
// API
//   readCsvTowers(input, { grid, fileLabel?, maxEventGap?, gridOrigin? }): AsyncGenerator<CsvEvent>
//     input: a path ('-' is stdin), a readable stream, or chunks; gzip detected by content.
//     grid: the grid to read on (a `# grid` line before the header, csv-grid.ts, must agree
//     with it: openCsvTowers and event-source.ts take the stated grid first).
//     Yields every event number from 0 up to the last one in the file, in order (a number
//     with no rows is an empty event). An invalid event is yielded with its problem and the
//     byte offset of the offending row; the events around it go on. A missing header, a bad
//     or decreasing event number, a jump of more than maxEventGap (default 1,000,000) event
//     numbers past the previous one (spec section 1), or a line longer than 1 MiB makes the
//     rest unreadable:
//     every event whose rows all come before the offending line is yielded (the event being
//     read included: rows of one event are together, so a row with another number ends it;
//     spec: "the events before it are kept"), then InputError("<file>, byte N: ...") is
//     thrown, naming the line number too. A line longer than 1 MiB drops the event being read,
//     whose rows may go on. Every event carries the line number of its offset's row.
//   openCsvTowers(input, { grid?, fileLabel?, maxEventGap? }): Promise<{ grid, origin, events }>
//     the same, on the grid the file states if it states one (csv-grid.ts openCsvGrid).
//   parseCsvTowersText(text, grid): for tests and small inputs, the same on a whole string.
//
// Readings of the spec, decided here:
//   - the header line is exactly `event,ieta,iphi,et` (an optional UTF-8 byte order mark
//     before it is skipped); lines end in LF or CRLF; the last line may lack its end.
//   - an event number is digits only (`007` is 7), at most 2^53 - 1; `ieta`, `iphi` are an
//     optional sign and digits; `et` is [+-] digits [. digits] or [+-] [digits] . digits, with
//     an optional exponent e[+-]digits; nothing else (no spaces, quotes, hex, `_`, nan, inf).
//   - a row whose first field is a good event number belongs to that event even when the row
//     is bad otherwise (other than four fields, a bad field): that event becomes invalid. A
//     row whose first field is not an event number (an empty line in the middle, text) is a
//     bad event number. Empty lines at the end of the file are fine. Lines starting with `#`
//     before the header are comments (one may state the grid, csv-grid.ts); after it they are
//     bad event numbers like any other text.
//   - the jump of the first event is counted from -1 (events are numbered from 0): a first
//     event numbered maxEventGap or more is too far, as if an event -1 had come before.
//   - a tower outside the grid explains the grid assumed and where it came from the first
//     time in a file; later ones say only that they are outside.
//   - validation follows grid.ts findInvalidTower, on rows in input order so the first bad
//     row is the one reported: a bad field, then et non-finite (`1e999`), then ieta or iphi
//     outside the grid (checked separately: ieta * phiBins + iphi alone could land on
//     another tower), then |et| above 1e150, then a repeated tower.
//   - flat tower index = ieta * phiBins + iphi (spec section 1).

import { InputError } from '../errors.js';
import { openCsvGrid, type CsvGridOrigin } from './csv-grid.js';
import { CsvEventBuilder, expand, type CsvEvent, type CsvReadLimits, type Pending } from './csv-event-builder.js';
import { CsvLineSplitter } from './csv-lines.js';
import { inputLabel, readChunks, type InflateLimits } from './input-chunks.js';
import type { Grid } from '../types.js';

export interface ReadCsvOptions extends CsvReadLimits {
  grid: Grid;
  fileLabel?: string;
}

/** Events of a CSV tower file; see the API note at the top of this file. */
export async function* readCsvTowers(
  input: string | NodeJS.ReadableStream | AsyncIterable<Uint8Array>,
  options: ReadCsvOptions,
): AsyncGenerator<CsvEvent> {
  const label = inputLabel(input, options.fileLabel);
  const chunks = typeof input === 'string' || 'pipe' in input ? readChunks(input as string | NodeJS.ReadableStream, label) : input;
  yield* csvEventsFromChunks(chunks as AsyncIterable<Uint8Array>, options.grid, label, options);
}

/** A CSV tower file on the grid it states (if it states one), else on `grid` or the default. */
export async function openCsvTowers(
  input: string | NodeJS.ReadableStream,
  options: { grid?: Grid; fileLabel?: string; maxEventGap?: number; inflate?: InflateLimits },
): Promise<{ grid: Grid; origin: CsvGridOrigin; events: AsyncGenerator<CsvEvent> }> {
  const label = inputLabel(input, options.fileLabel);
  const { grid, origin, chunks } = await openCsvGrid(readChunks(input, label, options.inflate), options.grid, label);
  const events = csvEventsFromChunks(chunks, grid, label, { maxEventGap: options.maxEventGap, gridOrigin: origin });
  return { grid, origin, events };
}

export async function* csvEventsFromChunks(chunks: AsyncIterable<Uint8Array>, grid: Grid, label: string, limits: CsvReadLimits = {}): AsyncGenerator<CsvEvent> {
  const splitter = new CsvLineSplitter(new CsvEventBuilder(grid, label, limits), label);
  const out: Pending[] = [];
  try {
    for await (const chunk of chunks) {
      splitter.feed(chunk, out);
      // yield before the next await so memory holds one chunk's events
      yield* expand(out);
      out.length = 0;
    }
    splitter.end(out);
  } catch (error) {
    // events completed before an unreadable line come out first
    yield* expand(out);
    throw error;
  }
  yield* expand(out);
}

/** The same on a whole text (tests, small inputs): the events, and the error ending the file if any. */
export function parseCsvTowersText(text: string, grid: Grid, label = '<text>', limits: CsvReadLimits = {}): { events: CsvEvent[]; error: InputError | null } {
  const splitter = new CsvLineSplitter(new CsvEventBuilder(grid, label, limits), label);
  const pending: Pending[] = [];
  try {
    splitter.feed(Buffer.from(text, 'utf8'), pending);
    splitter.end(pending);
  } catch (error) {
    if (!(error instanceof InputError)) throw error;
    return { events: [...expand(pending)], error };
  }
  return { events: [...expand(pending)], error: null };
}
