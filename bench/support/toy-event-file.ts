// The benches' event file: invented toy events (the toy generator, the fictional Halden ring
// scenario) on the default grid, numbered 0..events-1. With `distinct` below `events` the
// generated events are repeated in turn, so a long file costs little to make.

import { closeSync, openSync, writeSync } from 'node:fs';
import { encodeEventRecord } from '../../host/formats/event-codec.js';
import { encodeFileHeader } from '../../host/formats/file-header.js';
import { delimit } from '../../host/formats/wire.js';
import { generateEvents } from '../../host/generator/generate.js';
import { DEFAULT_GRID } from '../../host/types.js';

export interface ToyEventFile {
  /** the whole file */
  bytes: number;
  meanTowers: number;
  /** an event record's bytes (length prefix included), averaged */
  meanRecordBytes: number;
}

/** records gathered into one write of about this many bytes */
const WRITE_BYTES = 1 << 22;

export function writeToyEventFile(path: string, settings: { events: number; pileup: number; distinct?: number; seed?: number }): ToyEventFile {
  const { events, pileup } = settings;
  const pool: { towerIndex: Int32Array; towerEt: Float64Array }[] = [];
  for (const e of generateEvents(DEFAULT_GRID, { events: Math.min(settings.distinct ?? events, events), pileup, seed: settings.seed ?? 2026 })) {
    pool.push({ towerIndex: e.towerIndex, towerEt: e.towerEt });
  }
  const fd = openSync(path, 'w');
  try {
    const headerBytes = writeSync(fd, delimit(encodeFileHeader({ kind: 'events', grid: DEFAULT_GRID, producer: 'jetlag bench', label: 'invented toy events (Halden ring scenario)' })));
    let recordBytes = 0;
    let towers = 0;
    const parts: Uint8Array[] = [];
    let partBytes = 0;
    for (let k = 0; k < events; k++) {
      const source = pool[k % pool.length];
      towers += source.towerIndex.length;
      const record = delimit(encodeEventRecord({ event: k, towerIndex: source.towerIndex, towerEt: source.towerEt }));
      parts.push(record);
      partBytes += record.length;
      if (partBytes > WRITE_BYTES) {
        recordBytes += writeSync(fd, Buffer.concat(parts));
        parts.length = 0;
        partBytes = 0;
      }
    }
    if (parts.length > 0) recordBytes += writeSync(fd, Buffer.concat(parts));
    return { bytes: headerBytes + recordBytes, meanTowers: towers / events, meanRecordBytes: recordBytes / events };
  } finally {
    closeSync(fd);
  }
}
