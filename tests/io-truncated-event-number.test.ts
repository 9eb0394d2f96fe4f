// A cut event file names the event as well as the byte offset: the event number read from
// the start of the cut record, else the event of the record before it. Invented events.

import { Readable } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { encodeEventRecord } from '../host/formats/event-codec.js';
import { encodeFileHeader } from '../host/formats/file-header.js';
import { delimit } from '../host/formats/wire.js';
import { leadingEventNumber, readRecords } from '../host/input/record-reader.js';
import { DEFAULT_GRID } from '../host/types.js';

function eventFileBytes(events: number[]): Buffer {
  const header = encodeFileHeader({ kind: 'events', formatVersion: 1, grid: { ...DEFAULT_GRID }, producer: 'test', label: 'invented' });
  const parts = [delimit(header), ...events.map((event) => delimit(encodeEventRecord({ event, towerIndex: [event % 100, 200], towerEt: [1.5, 2.5] })))];
  return Buffer.concat(parts.map((p) => Buffer.from(p)));
}

async function errorOf(bytes: Uint8Array): Promise<{ read: number; message: string }> {
  let read = 0;
  try {
    for await (const record of readRecords(Readable.from([Buffer.from(bytes)]), { fileLabel: 'cut.events' })) { void record; read++; }
  } catch (error) {
    return { read, message: (error as Error).message };
  }
  return { read, message: '' };
}

describe('a cut event file', () => {
  it('names the event whose record is cut, read from the bytes that are there', async () => {
    const whole = eventFileBytes([0, 1, 7]);
    const { read, message } = await errorOf(whole.subarray(0, whole.length - 5));
    expect(read).toBe(3); // the header and events 0 and 1
    expect(message).toMatch(/^cut\.events, event 7, byte \d+: truncated record: length \d+ but only \d+ bytes follow$/);
  });

  it('names the event before when the cut leaves nothing of the record but its length', async () => {
    const whole = eventFileBytes([0, 1, 7]);
    const lastRecordBytes = delimit(encodeEventRecord({ event: 7, towerIndex: [7, 200], towerEt: [1.5, 2.5] })).length;
    const { message } = await errorOf(whole.subarray(0, whole.length - lastRecordBytes + 1));
    expect(message).toMatch(/^cut\.events, byte \d+: truncated record: length \d+ but only 0 bytes follow \(the record after event 1\)$/);
  });

  it('reads no event number from a header record or from bytes without field 1', () => {
    expect(leadingEventNumber(encodeFileHeader({ kind: 'events', formatVersion: 1, grid: { ...DEFAULT_GRID }, producer: 'p', label: '' }))).toBeNull();
    expect(leadingEventNumber(Uint8Array.of(0x10, 0x05))).toBeNull(); // field 2 only
    expect(leadingEventNumber(Uint8Array.of(0x10, 0x05, 0x08, 0x2a))).toBe(42); // field 2, then field 1 = 42
    expect(leadingEventNumber(Uint8Array.of(0x08, 0xff))).toBeNull(); // field 1 cut inside its varint
  });
});
