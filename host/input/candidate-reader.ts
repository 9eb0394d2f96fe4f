// Reading a candidate: the jets of an outside implementation (or of one of ours) that
// `jetlag compare` checks against the reference. Three formats, told apart by content (gzip
// either way, detected by record-reader.ts):
//
//   jets file   our own (proto/jetlag.proto): the header carries grid, settings and engine.
//               Every event has a record; an event with no record is missing. Only pt, y,
//               phi (of equal lengths) and optionally mass are read; px, py, pz, e and the
//               constituents may be left out. Groomed rows (trim, soft_drop) are read when
//               the record holds them.
//   JSON lines  the first non-blank byte is '{': one object per line, as `jetlag cluster`
//               writes them (jets-jsonl.ts): {"event":n,"jets":[{"pt":…,"y":…,"phi":…,"m":…}]}
//               or {"event":n,"error":"…"}; a jet's "trim" and "softdrop" objects (their
//               "pt" and "m") are read when every jet of the line has them; other keys are
//               ignored. Every event has a line
//               (a line can hold "jets":[]), so an event with no line is missing.
//   CSV         header `event,pt,y,phi` or `event,pt,y,phi,m` (or `jetlag export`'s with the
//               pileup columns after m, read but not compared; the groomed columns after
//               those, of which each groomer's pt and m are read as the other formats'
//               (candidate-csv-groomed.ts); then cluster_time_ns and towers, skipped), then
//               one row per jet, rows of an event together. CSV cannot list an event
//               without jets, so an event with no rows has no jets.
//
// API
//   openCandidate(input, { fileLabel? }): Promise<CandidateSource>
//     -> { label, format, header (jets file only, else null), absentMeansEmpty, events }
//     events: AsyncGenerator<CandidateEvent>, in file order (order, duplicates and event
//     numbers are judged by the caller, which knows the events). Unreadable input (a broken
//     jets-file header or framing, a missing CSV header, a CSV row whose event number is
//     unreadable) throws InputError naming file, line (text formats) and byte offset, after
//     every event before it. Problems of one CSV row or JSON line name its line and byte.
//
// A CandidateEvent is one event's jets in flat arrays (count, pt, rapidity, phi, mass), or,
// with `error` set, an event the candidate says is invalid or whose jets cannot be read (a bad
// CSV row or JSON line with a readable event number, an inconsistent jets record). `event` is
// null for a jets record or JSON line too broken to say which event it is; the caller names
// it and goes on. Numbers: finite decimal literals in CSV (as for tower files); JSON numbers
// in JSON lines, where null (how our writer stores a NaN) reads back as NaN.

import { InputError } from '../errors.js';
import { peekInput, readFileHeader } from './event-source.js';
import type { FileHeader } from '../formats/file-header.js';
import { inputLabel, type InflateLimits } from './input-chunks.js';
import { csvEvents } from './candidate-csv.js';
import { jetsFileEvents } from './candidate-jets-file.js';
import { jsonLineEvents } from './candidate-jsonl.js';
import { lines } from './candidate-lines.js';

export type CandidateFormat = 'jets-file' | 'jsonl' | 'csv';

export interface CandidateEvent {
  /** null when the record or line is too broken to say */
  event: number | null;
  /** byte offset (uncompressed) of the record, of the event's first CSV row, or of the line */
  offset: number;
  count: number;
  pt: Float64Array;
  rapidity: Float64Array;
  phi: Float64Array;
  /** zeros when the candidate gives no mass */
  mass: Float64Array;
  hasMass: boolean;
  /** groomed pt and mass per jet (spec section 12), for each groomer the candidate reports */
  groomed?: CandidateGroomed;
  /** '' for readable jets; else why the event has none */
  error: string;
}

export interface CandidateGroomed {
  trim?: { pt: Float64Array; mass: Float64Array };
  softdrop?: { pt: Float64Array; mass: Float64Array };
}

export interface CandidateSource {
  label: string;
  format: CandidateFormat;
  /** the jets file's header (grid, settings with engine); null for CSV and JSON lines */
  header: FileHeader | null;
  /** CSV: an event with no rows has no jets; the other formats list every event */
  absentMeansEmpty: boolean;
  events: AsyncGenerator<CandidateEvent>;
}

export interface CandidateOptions {
  fileLabel?: string;
  maxRecordBytes?: number;
  /** caps on inflating a gzip input (input-chunks.ts) */
  inflate?: InflateLimits;
}

export async function openCandidate(input: string | NodeJS.ReadableStream, options: CandidateOptions = {}): Promise<CandidateSource> {
  const label = inputLabel(input, options.fileLabel);
  const { prefix, kind, chunks: all } = await peekInput(input, label, options.inflate);
  if (kind === 'empty') {
    throw new InputError(label, 'empty file: not a jets file, JSON lines or CSV of jets', undefined, 0);
  }
  if (kind === 'records') {
    const { header, records } = await readFileHeader(all, label, options.maxRecordBytes);
    if (header.kind !== 'jets') {
      await records.return(undefined);
      throw new InputError(label, 'this is an event file, expected a candidate\'s jets (a jets file, JSON lines or CSV of jets)', undefined, 0);
    }
    return { label, format: 'jets-file', header, absentMeansEmpty: false, events: jetsFileEvents(records) };
  }
  // text: JSON lines when the first non-blank character (after a byte order mark) is '{'
  let pos = prefix[0] === 0xef && prefix[1] === 0xbb && prefix[2] === 0xbf ? 3 : 0;
  while (pos < prefix.length && (prefix[pos] === 0x20 || prefix[pos] === 0x0a || prefix[pos] === 0x0d || prefix[pos] === 0x09)) pos++;
  if (prefix[pos] === 0x7b) return { label, format: 'jsonl', header: null, absentMeansEmpty: false, events: jsonLineEvents(lines(all, label), label) };
  return { label, format: 'csv', header: null, absentMeansEmpty: true, events: csvEvents(lines(all, label), label) };
}
