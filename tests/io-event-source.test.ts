import { readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { decodeEventRecord, encodeEventRecord } from '../host/formats/event-codec.js';
import { detectFormat, openEventSource, openRecordFile } from '../host/input/event-source.js';
import { EventTowerReader } from '../host/input/event-towers.js';
import { encodeFileHeader } from '../host/formats/file-header.js';
import { EventFileWriter } from '../host/output/record-writer.js';
import type { Grid } from '../host/types.js';
import { delimit } from '../host/formats/wire.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('source');
const grid: Grid = { etaMin: -1, etaMax: 1, etaBins: 4, phiBins: 8 };

async function writeEvents(name: string, events: Parameters<EventFileWriter['writeEvent']>[0][], gzip = false): Promise<string> {
  const path = join(dir, name);
  const writer = await EventFileWriter.open(path, { grid, producer: 'jetlag test', label: 'fictional run' }, { gzip });
  for (const e of events) await writer.writeEvent(e);
  await writer.close();
  return path;
}

async function readAll(path: string, options = {}) {
  const source = await openEventSource(path, options);
  const records: { offset: number; event: ReturnType<typeof decodeEventRecord> }[] = [];
  let error: string | null = null;
  try {
    for await (const r of source.records) records.push({ offset: r.offset, event: decodeEventRecord(r.bytes) });
  } catch (e) {
    error = (e as Error).message;
  }
  return { source, records, error };
}

const someEvents = [
  { event: 0, towerIndex: [3, 1], towerEt: [1.5, 2] },
  { event: 1 },
  { event: 2, depositEta: [0.1], depositPhi: [-0.5], depositEt: [4] },
];

describe('event sources', () => {
  it('reads an event file with its header grid, plain or gzip', async () => {
    for (const gzip of [false, true]) {
      const path = await writeEvents(`plain-${gzip}.pb`, someEvents, gzip);
      const { source, records, error } = await readAll(path, { grid: { etaMin: 0, etaMax: 1, etaBins: 1, phiBins: 1 } });
      expect(error).toBeNull();
      expect(source.format).toBe('events-file');
      expect(source.header).toEqual({ kind: 'events', grid, producer: 'jetlag test', label: 'fictional run', formatVersion: 1 });
      expect(records.map((r) => r.event.event)).toEqual([0, 1, 2]);
      expect(Array.from(records[0].event.towerIndex)).toEqual([3, 1]);
      expect(Array.from(records[2].event.depositPhi)).toEqual([-0.5]);
    }
  });

  it('gives each record the offset of its length varint', async () => {
    const path = await writeEvents('offsets.pb', someEvents);
    const bytes = readFileSync(path);
    const { records } = await readAll(path);
    const headerLength = bytes[0] + 1;
    expect(records[0].offset).toBe(headerLength);
    expect(records[1].offset).toBe(headerLength + 1 + bytes[headerLength]);
  });

  it('leaves no temporary file behind after close', async () => {
    await writeEvents('tidy.pb', someEvents);
    expect(readdirSync(dir).filter((n) => n.endsWith('.tmp'))).toEqual([]);
  });

  it('reads CSV by content, with the given grid, as event records', async () => {
    const path = join(dir, 'towers.data');
    const text = 'event,ieta,iphi,et\n0,1,2,3\n2,0,0,1\n2,0,0,1\n3,3,7,2.5\n';
    writeFileSync(path, gzipSync(Buffer.from(text)));
    const { source, records, error } = await readAll(path, { grid });
    expect(error).toBeNull();
    expect(source.format).toBe('csv');
    expect(source.header.grid).toEqual(grid);
    expect(records.map((r) => [r.event.event, Array.from(r.event.towerIndex), Array.from(r.event.towerEt), r.event.error, r.offset])).toEqual([
      [0, [10], [3], '', 19],
      [1, [], [], '', 27],
      [2, [], [], 'tower (ieta 0, iphi 0) repeats an earlier row of the event (line 4)', 35],
      [3, [31], [2.5], '', 43],
    ]);
  });

  it('ends CSV records with the unreadable-line error after the events before it', async () => {
    const path = join(dir, 'decreasing.csv');
    writeFileSync(path, 'event,ieta,iphi,et\n0,1,2,3\n1,0,0,1\n0,0,0,1\n');
    const { records, error } = await readAll(path, { grid });
    expect(records.map((r) => r.event.event)).toEqual([0, 1]);
    expect(error).toBe(`${path}, line 4, byte 35: event number 0 after 1: numbers must not decrease (the rest of the file is unreadable)`);
  });

  it('ends event-file records with a framing error after the records before it', async () => {
    const good = readFileSync(await writeEvents('cut-source.pb', someEvents));
    const path = join(dir, 'cut.pb');
    writeFileSync(path, good.subarray(0, good.length - 2));
    const { records, error } = await readAll(path);
    expect(records.map((r) => r.event.event)).toEqual([0, 1]);
    expect(error).toMatch(new RegExp(`^${path.replace(/[.]/g, '\\.')}, event 2, byte \\d+: truncated record: length 32 but only 30 bytes follow$`));
  });

  it('names the problem with a header that is not ours', async () => {
    const path = join(dir, 'foreign.pb');
    writeFileSync(path, delimit(encodeEventRecord({ event: 5, towerIndex: [1], towerEt: [1] })));
    await expect(openEventSource(path)).rejects.toThrow(`${path}, byte 0: bad file header: at record byte 0: field 1 (signature) has wire type 0 (varint), expected 2 (length-delimited)`);
    const empty = join(dir, 'empty.pb');
    writeFileSync(empty, '');
    await expect(openEventSource(empty)).rejects.toThrow(`${empty}, byte 0: empty file: neither an event file (no header record) nor a CSV tower file (no header line)`);
  });

  it('refuses a jets file as events, and openRecordFile takes it', async () => {
    const path = join(dir, 'jets.pb');
    const header = encodeFileHeader({
      kind: 'jets', grid, producer: 'x', label: '',
      settings: { p: -1, radius: 0.4, ptMin: 0, threshold: 0, recombination: 'e', engine: 'reference' },
    });
    writeFileSync(path, delimit(header));
    await expect(openEventSource(path)).rejects.toThrow(`${path}: this is a jets file, expected events (an event file or a CSV tower file)`);
    expect((await openRecordFile(path)).format).toBe('jets-file');
  });

  it('tells the formats apart by their first bytes', () => {
    expect(detectFormat(delimit(encodeFileHeader({ kind: 'events', grid, producer: '', label: '' })).subarray(0, 16))).toBe('records');
    expect(detectFormat(Buffer.from('event,ieta,iphi,'))).toBe('csv');
    expect(detectFormat(Buffer.from('0,1,2,3\n'))).toBe('csv');
    expect(detectFormat(new Uint8Array([5, 8, 1, 0x12]))).toBe('records');
    expect(detectFormat(new Uint8Array(0))).toBe('empty');
    // a header longer than 127 bytes has a two-byte length before the signature
    expect(detectFormat(delimit(encodeFileHeader({ kind: 'events', grid, producer: '', label: 'x'.repeat(300) })).subarray(0, 16))).toBe('records');
  });
});

describe('event records to validated towers', () => {
  const reader = new EventTowerReader(grid);

  it('passes valid pre-binned towers through in input order', () => {
    const r = reader.read(encodeEventRecord({ event: 4, towerIndex: [7, 2], towerEt: [1, -3] }));
    expect(r.ok && { event: r.event, towerIndex: Array.from(r.towerIndex), towerEt: Array.from(r.towerEt), fromDeposits: r.fromDeposits })
      .toEqual({ event: 4, towerIndex: [7, 2], towerEt: [1, -3], fromDeposits: false });
  });

  it('bins raw deposits onto the grid, counting those outside acceptance', () => {
    const r = reader.read(encodeEventRecord({ event: 1, depositEta: [0.1, 0.2, 3], depositPhi: [0.1, 0.2, 0], depositEt: [1, 2, 5] }));
    expect(r.ok && { towerIndex: Array.from(r.towerIndex), towerEt: Array.from(r.towerEt), outside: r.outsideAcceptance })
      .toEqual({ towerIndex: [16], towerEt: [3], outside: 1 });
  });

  it('reports the first bad tower in input order', () => {
    expect(reader.read(encodeEventRecord({ event: 2, towerIndex: [1, 99, 1], towerEt: [1, 1, NaN] })))
      .toEqual({ ok: false, event: 2, problem: 'tower 1 has index 99 outside the grid of 32 towers' });
    expect(reader.read(encodeEventRecord({ event: 2, towerIndex: [1, 1], towerEt: [1, 2] })))
      .toEqual({ ok: false, event: 2, problem: 'tower 1 repeats index 1' });
  });

  it('forgets the towers of one event before the next', () => {
    reader.read(encodeEventRecord({ event: 2, towerIndex: [1, 5, 9, 5], towerEt: [1, 1, 1, 1] }));
    expect(reader.read(encodeEventRecord({ event: 3, towerIndex: [5, 9], towerEt: [1, 2] })).ok).toBe(true);
  });

  it('reports an error text, mismatched arrays, both forms, and a broken record', () => {
    expect(reader.read(encodeEventRecord({ event: 6, error: 'bad row' }))).toEqual({ ok: false, event: 6, problem: 'bad row' });
    expect(reader.read(encodeEventRecord({ event: 6, towerIndex: [1, 2], towerEt: [1] })))
      .toEqual({ ok: false, event: 6, problem: 'tower_index has 2 entries but tower_et has 1' });
    expect(reader.read(encodeEventRecord({ event: 6, towerIndex: [1], towerEt: [1], depositEta: [0], depositPhi: [0], depositEt: [1] })))
      .toEqual({ ok: false, event: 6, problem: 'the record holds both towers and raw deposits' });
    expect(reader.read(new Uint8Array([0x08, 0x07, 0x1a, 0x09])))
      .toEqual({ ok: false, event: 7, problem: 'bad event record: at record byte 3: field length 9 runs past the end of the record (0 bytes left)' });
    expect(reader.read(new Uint8Array([0x0f])))
      .toEqual({ ok: false, event: undefined, problem: 'bad event record: at record byte 0: field 1 has unsupported wire type 7 (invalid 7)' });
  });
});
