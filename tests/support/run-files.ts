// Small event files for the run tests, written with the project's own encoders.

import { writeFileSync } from 'node:fs';
import { gzipSync } from 'node:zlib';
import { encodeEventRecord, type EventRecordFields } from '../../host/formats/event-codec.js';
import { encodeFileHeader } from '../../host/formats/file-header.js';
import { generateEvents } from '../../host/generator/generate.js';
import { delimit } from '../../host/formats/wire.js';
import { DEFAULT_GRID, type Grid } from '../../host/types.js';

export interface WrittenFile {
  path: string;
  /** byte offset of each event record (of its length varint), in file order */
  offsets: number[];
}

export function writeEventFile(path: string, events: readonly EventRecordFields[], grid: Grid = DEFAULT_GRID, gzip = false): WrittenFile {
  const parts: Uint8Array[] = [delimit(encodeFileHeader({ kind: 'events', grid, producer: 'jetlag tests', label: 'invented test events' }))];
  const offsets: number[] = [];
  let at = parts[0].length;
  for (const fields of events) {
    const record = delimit(encodeEventRecord(fields));
    offsets.push(at);
    at += record.length;
    parts.push(record);
  }
  const bytes = Buffer.concat(parts);
  writeFileSync(path, gzip ? gzipSync(bytes) : bytes);
  return { path, offsets };
}

/** Toy-generator events (invented data), small enough for the reference to cluster quickly. */
export function toyEvents(count: number, seed: number, pileup = 10): EventRecordFields[] {
  const events: EventRecordFields[] = [];
  for (const event of generateEvents(DEFAULT_GRID, { events: count, pileup, seed })) {
    events.push({ event: event.event, towerIndex: event.towerIndex, towerEt: event.towerEt });
  }
  return events;
}
