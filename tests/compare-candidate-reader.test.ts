// Reading candidate jets: formats told apart by content, streaming across chunk boundaries,
// byte offsets in error texts. Jet values are invented.

import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { Readable } from 'node:stream';
import { gzipSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { InputError } from '../host/errors.js';
import { openCandidate, type CandidateEvent } from '../host/input/candidate-reader.js';
import { emptyJetSet } from '../host/formats/jets-codec.js';
import { JetsFileWriter } from '../host/output/jets-writer.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS } from '../host/types.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('candidate');
let fileNumber = 0;
function file(text: string | Uint8Array): string {
  const path = join(dir, `${fileNumber++}.candidate`);
  writeFileSync(path, text);
  return path;
}

/** a stream that hands out the bytes a few at a time, so lines cross chunk boundaries */
function trickle(text: string, size = 3): Readable {
  const bytes = Buffer.from(text, 'utf8');
  const chunks: Buffer[] = [];
  for (let k = 0; k < bytes.length; k += size) chunks.push(bytes.subarray(k, k + size));
  return Readable.from(chunks);
}

async function readAll(input: string | Readable): Promise<{ format: string; events: CandidateEvent[]; error: InputError | null }> {
  const source = await openCandidate(input);
  const events: CandidateEvent[] = [];
  try {
    for await (const event of source.events) events.push(event);
  } catch (error) {
    if (!(error instanceof InputError)) throw error;
    return { format: source.format, events, error };
  }
  return { format: source.format, events, error: null };
}

const CSV = 'event,pt,y,phi,m\n0,50.5,0.1,1.5,3\n0,21,-1.25,6.2,0\n2,30,2,.5,1e-3\n';

describe('CSV candidates', () => {
  it('are read as CSV with one event per group of rows', async () => {
    const { format, events } = await readAll(file(CSV));
    expect(format).toBe('csv');
    expect(events.map((e) => [e.event, e.count])).toEqual([[0, 2], [2, 1]]);
    expect([...events[0].pt]).toEqual([50.5, 21]);
    expect([...events[1].phi]).toEqual([0.5]);
    expect(events[1].mass[0]).toBe(1e-3);
  });

  it('give each event the byte offset of its first row', async () => {
    const { events } = await readAll(file(CSV));
    expect(events[1].offset).toBe(CSV.indexOf('2,30'));
  });

  it('read the same from a stream of three-byte chunks', async () => {
    const whole = await readAll(file(CSV));
    const trickled = await readAll(trickle(CSV));
    expect(trickled.events).toEqual(whole.events);
  });

  it('take CRLF line ends, a byte order mark and a header without m', async () => {
    const { events } = await readAll(file('\ufeffevent,pt,y,phi\r\n4,12,0,1\r\n'));
    expect(events.map((e) => [e.event, e.pt[0], e.hasMass])).toEqual([[4, 12, false]]);
  });

  it('are read through gzip', async () => {
    const { format, events } = await readAll(file(gzipSync(CSV)));
    expect(format).toBe('csv');
    expect(events.length).toBe(2);
  });

  it('mark an event with a bad row invalid and go on with the next event', async () => {
    const text = 'event,pt,y,phi\n0,1,2,3\n0,1,2\n1,5,0,0\n';
    const { events, error } = await readAll(file(text));
    expect(error).toBeNull();
    expect(events[0].error).toBe(`row at line 3, byte ${text.indexOf('0,1,2\n')} has 3 fields, expected 4`);
    expect(events[1]).toMatchObject({ event: 1, count: 1, error: '' });
  });

  it('refuse nan and inf as numbers', async () => {
    const { events } = await readAll(file('event,pt,y,phi\n0,nan,0,0\n1,5,inf,0\n'));
    expect(events.map((e) => e.error)).toEqual(['row at line 2, byte 15: bad pt "nan"', 'row at line 3, byte 25: bad y "inf"']);
  });

  it('stop at a bad event number with its byte offset, keeping the events before', async () => {
    const text = 'event,pt,y,phi\n0,1,2,3\nx,1,2,3\n';
    const { events, error } = await readAll(file(text));
    expect(events.map((e) => e.event)).toEqual([0]);
    expect(error?.message).toMatch(new RegExp(`byte ${text.indexOf('x,')}: bad event number "x"`));
  });
});

describe('JSON-line candidates', () => {
  const LINES = [
    '{"event":0,"jets":[{"pt":40,"y":0.5,"phi":1,"m":2,"px":1},{"pt":null,"y":0,"phi":0,"m":0}]}',
    '{"event":1,"error":"bad tower"}',
    '{"event":2,"jets":[]}',
  ].join('\n') + '\n';

  it('are told from CSV by their first character and read per line', async () => {
    const { format, events } = await readAll(file(LINES));
    expect(format).toBe('jsonl');
    expect(events.map((e) => [e.event, e.count])).toEqual([[0, 2], [1, 0], [2, 0]]);
  });

  it('read null (how a non-finite value is written) as NaN', async () => {
    const { events } = await readAll(file(LINES));
    expect(events[0].pt[1]).toBeNaN();
  });

  it('carry an error line as an event the candidate says is invalid', async () => {
    const { events } = await readAll(file(LINES));
    expect(events[1].error).toBe('the candidate reports the event invalid: bad tower');
  });

  it('name a line that is not JSON by its byte offset and go on', async () => {
    const text = '{"event":0,"jets":[]}\n{oops\n{"event":1,"jets":[]}\n';
    const { events } = await readAll(file(text));
    expect(events[1].event).toBeNull();
    expect(events[1].error).toMatch(/^line 2 \(byte 22\) is not JSON/);
    expect(events[2].event).toBe(1);
  });

  it('name a jet without a number field', async () => {
    const { events } = await readAll(file('{"event":3,"jets":[{"pt":1,"y":2}]}\n'));
    expect(events[0]).toMatchObject({ event: 3, error: 'line 1 (byte 0): jet 0 has no number "phi"' });
  });

  it('read the same from a stream of three-byte chunks', async () => {
    expect((await readAll(trickle(LINES))).events).toEqual((await readAll(file(LINES))).events);
  });
});

describe('jets-file candidates', () => {
  it('come with their header: grid, settings and engine', async () => {
    const path = join(dir, 'header.jets');
    const writer = await JetsFileWriter.open(path, DEFAULT_GRID, { ...DEFAULT_SETTINGS, radius: 0.6, engine: 'my-port' });
    await writer.writeJets({ event: 0, jets: emptyJetSet() });
    await writer.writeJets({ event: 1, error: 'overflow' });
    await writer.close();
    const source = await openCandidate(path);
    expect(source.format).toBe('jets-file');
    expect(source.header?.settings).toMatchObject({ radius: 0.6, engine: 'my-port' });
    expect(source.absentMeansEmpty).toBe(false);
    const events: CandidateEvent[] = [];
    for await (const event of source.events) events.push(event);
    expect(events.map((e) => [e.event, e.error])).toEqual([[0, ''], [1, 'the candidate reports the event invalid: overflow']]);
  });

  it('an empty file is named as such', async () => {
    await expect(openCandidate(file(''))).rejects.toThrow(/empty file/);
  });
});
