import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { Readable } from 'node:stream';
import { gzipSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import type { CsvEvent } from '../host/input/csv-event-builder.js';
import { parseCsvTowersText, readCsvTowers } from '../host/input/csv-towers.js';
import type { Grid } from '../host/types.js';
import { tempDirForTest } from './support/temp-dir.js';

const grid: Grid = { etaMin: -2.5, etaMax: 2.5, etaBins: 50, phiBins: 64 };
const HEADER = 'event,ieta,iphi,et\n';

function plain(events: CsvEvent[]) {
  return events.map((e) => ({ event: e.event, offset: e.offset, towerIndex: Array.from(e.towerIndex), towerEt: Array.from(e.towerEt), problem: e.problem }));
}

function parse(text: string) {
  const { events, error } = parseCsvTowersText(text, grid, 'towers.csv');
  return { events: plain(events), error: error?.message ?? null };
}

/** the problem of event 0 when its only row is `row` */
function rowProblem(row: string): string | null {
  const { events, error } = parse(HEADER + row + '\n');
  expect(error).toBeNull();
  return events[0].problem;
}

describe('CSV tower files: good input', () => {
  it('reads towers with flat index ieta * phiBins + iphi, in row order', () => {
    const { events, error } = parse(HEADER + '0,1,2,3.5\n0,0,63,1\n');
    expect(error).toBeNull();
    expect(events).toEqual([{ event: 0, offset: 19, towerIndex: [66, 63], towerEt: [3.5, 1], problem: null }]);
  });

  it('makes empty events of numbers with no rows, from 0', () => {
    const { events } = parse(HEADER + '2,0,0,1\n2,0,1,1\n5,0,0,2\n');
    expect(events.map((e) => [e.event, e.towerIndex.length])).toEqual([[0, 0], [1, 0], [2, 2], [3, 0], [4, 0], [5, 1]]);
  });

  it('accepts each decimal literal form of et', () => {
    const forms: [string, number][] = [['12', 12], ['1.5', 1.5], ['.5', 0.5], ['5.', 5], ['1e-3', 1e-3], ['+3', 3], ['-2.25', -2.25], ['1E+2', 100], ['007', 7], ['-0', -0]];
    for (const [text, value] of forms) {
      const { events } = parse(HEADER + `0,0,0,${text}\n`);
      expect(events[0].problem, text).toBeNull();
      expect(events[0].towerEt, text).toEqual([value]);
    }
  });

  it('accepts the header with spaces around its names, and still refuses other names', () => {
    const spaced = parse('event, ieta, iphi, et\n0,1,2,3\n');
    expect(spaced.error).toBeNull();
    expect(spaced.events.map((e) => e.event)).toEqual([0]);
    expect(parse('event, eta, phi, et\n0,1,2,3\n').error).toContain('missing header');
  });

  it('accepts CRLF line ends, a byte order mark, a last line without its end, and empty lines at the end', () => {
    const text = '\ufeffevent,ieta,iphi,et\r\n0,0,1,2\r\n1,0,2,3\r\n\r\n\n';
    const { events, error } = parse(text);
    expect(error).toBeNull();
    expect(events.map((e) => [e.event, e.towerIndex[0], e.towerEt[0], e.problem])).toEqual([[0, 1, 2, null], [1, 2, 3, null]]);
    expect(parse(HEADER + '0,0,1,2').events[0].towerEt).toEqual([2]);
  });

  it('reads a header-only file as no events', () => {
    expect(parse(HEADER)).toEqual({ events: [], error: null });
  });

  it('gives the same events from a stream in small chunks and from gzip', async () => {
    const text = HEADER + Array.from({ length: 300 }, (_, k) => `${Math.floor(k / 7)},${k % 50},${(k * 3) % 64},${k / 8}`).join('\r\n') + '\n';
    const whole = parse(text).events;
    const bytes = Buffer.from(text);
    const chunks: Buffer[] = [];
    for (let k = 0; k < bytes.length; k += 5) chunks.push(bytes.subarray(k, k + 5));
    const streamed: CsvEvent[] = [];
    for await (const e of readCsvTowers(Readable.from(chunks), { grid, fileLabel: 'towers.csv' })) streamed.push(e);
    expect(plain(streamed)).toEqual(whole);
    const dir = tempDirForTest('csv');
    const path = join(dir, 'towers.csv');
    writeFileSync(path, gzipSync(bytes));
    const unzipped: CsvEvent[] = [];
    for await (const e of readCsvTowers(path, { grid })) unzipped.push(e);
    expect(plain(unzipped)).toEqual(whole);
  });
});

describe('CSV tower files: invalid events', () => {
  it('rejects et literals that are not plain decimals', () => {
    for (const text of ['1e', '0x10', '1_0', ' 5', '5 ', 'nan', 'NaN', 'inf', 'Infinity', '', '.', '1.2.3', '"5"', '1e+', '++1', '٣']) {
      expect(rowProblem(`0,0,0,${text}`), text).toBe(`et ${JSON.stringify(text)} is not a decimal number`);
    }
  });

  it('rejects ieta and iphi that are not integers', () => {
    expect(rowProblem('0,1.0,0,1')).toBe('ieta "1.0" is not an integer');
    expect(rowProblem('0,0, 3,1')).toBe('iphi " 3" is not an integer');
    expect(rowProblem('0,,0,1')).toBe('ieta "" is not an integer');
  });

  it('rejects a row with other than four fields', () => {
    expect(rowProblem('0,1,2')).toBe('row has 3 fields, expected 4 (event,ieta,iphi,et)');
    expect(rowProblem('0,1,2,3,')).toBe('row has 5 fields, expected 4 (event,ieta,iphi,et)');
    expect(rowProblem('0')).toBe('row has 1 field, expected 4 (event,ieta,iphi,et)');
  });

  it('rejects towers outside the grid, checking ieta and iphi each', () => {
    expect(rowProblem('0,0,64,1')).toMatch(/^tower \(ieta 0, iphi 64\) is outside the grid of 50 x 64 towers( |$)/);
    expect(rowProblem('0,50,0,1')).toMatch(/^tower \(ieta 50, iphi 0\) is outside the grid of 50 x 64 towers( |$)/);
    expect(rowProblem('0,-1,0,1')).toMatch(/^tower \(ieta -1, iphi 0\) is outside the grid of 50 x 64 towers( |$)/);
  });

  it('says which grid it assumed the first time a tower is outside it, and only then', () => {
    const { events } = parse(HEADER + '0,0,64,1\n1,50,0,1\n');
    expect(events[0].problem).toBe('tower (ieta 0, iphi 64) is outside the grid of 50 x 64 towers (the grid assumed: eta [-2.5, 2.5) in 50 bins, phi in 64 bins, given; ' +
      'a CSV from another grid states it in a "# grid" line before the header, or give --eta-min, --eta-max, --eta-bins, --phi-bins)');
    expect(events[1].problem).toBe('tower (ieta 50, iphi 0) is outside the grid of 50 x 64 towers');
  });

  it('rejects et that overflows to infinity, |et| above 1e150 and a repeated tower', () => {
    expect(rowProblem('0,0,0,1e999')).toBe('et 1e999 is not finite');
    expect(rowProblem('0,0,0,-2e150')).toBe('|et| -2e150 is above 1e+150');
    const { events } = parse(HEADER + '0,3,4,1\n0,3,4,2\n');
    expect(events[0].problem).toBe('tower (ieta 3, iphi 4) repeats an earlier row of the event');
  });

  it('reports the first bad row of the event with its byte offset, and keeps the events around it', () => {
    const text = HEADER + '0,0,0,1\n1,0,0,1\n1,0,1,x\n1,0,2,y\n2,0,0,4\n';
    const { events, error } = parse(text);
    expect(error).toBeNull();
    expect(events).toEqual([
      { event: 0, offset: 19, towerIndex: [0], towerEt: [1], problem: null },
      { event: 1, offset: text.indexOf('1,0,1,x'), towerIndex: [], towerEt: [], problem: 'et "x" is not a decimal number' },
      { event: 2, offset: text.indexOf('2,0,0,4'), towerIndex: [0], towerEt: [4], problem: null },
    ]);
  });

  it('forgets the towers of an invalid event so the next event may reuse them', () => {
    const { events } = parse(HEADER + '0,0,0,1\n0,0,0,x\n1,0,0,1\n');
    expect(events[1].problem).toBeNull();
  });
});

describe('CSV tower files: unreadable rest', () => {
  it('needs the header line', () => {
    expect(parse('0,1,2,3\n')).toEqual({ events: [], error: 'towers.csv, line 1, byte 0: missing header: expected "event,ieta,iphi,et", got "0,1,2,3"' });
    expect(parse('event,ieta,iphi\n').error).toBe('towers.csv, line 1, byte 0: missing header: expected "event,ieta,iphi,et", got "event,ieta,iphi"');
    expect(parse('').error).toBe('towers.csv, line 1, byte 0: missing header: expected "event,ieta,iphi,et", the file is empty');
  });

  it('stops at a bad event number, keeping the events before', () => {
    const text = HEADER + '0,0,0,1\n1,0,0,1\n1,0,1,1\nx,0,0,1\n3,0,0,1\n';
    const { events, error } = parse(text);
    expect(events.map((e) => e.event)).toEqual([0, 1]);
    expect(error).toBe(`towers.csv, line 5, byte ${text.indexOf('x,0')}: bad event number "x" (the rest of the file is unreadable)`);
    for (const bad of ['-1', '+1', '1.0', ' 1', '9007199254740992']) {
      expect(parse(HEADER + `${bad},0,0,1\n`).error).toBe(`towers.csv, line 2, byte 19: bad event number ${JSON.stringify(bad)} (the rest of the file is unreadable)`);
    }
  });

  it('stops at a decreasing event number, keeping the events before', () => {
    const text = HEADER + '0,0,0,1\n2,0,0,1\n1,0,0,1\n';
    const { events, error } = parse(text);
    expect(events.map((e) => e.event)).toEqual([0, 1, 2]);
    expect(error).toBe(`towers.csv, line 4, byte ${text.indexOf('1,0,0,1')}: event number 1 after 2: numbers must not decrease (the rest of the file is unreadable)`);
  });

  it('stops at an empty line followed by more rows', () => {
    const text = HEADER + '0,0,0,1\n\n1,0,0,1\n';
    const { events, error } = parse(text);
    expect(events.map((e) => e.event)).toEqual([0]);
    expect(error).toBe('towers.csv, line 3, byte 27: bad event number "" (an empty line before more rows; the rest of the file is unreadable)');
  });

  it('stops at truncated gzip, keeping the events read before the cut', async () => {
    const text = HEADER + Array.from({ length: 20000 }, (_, k) => `${Math.floor(k / 10)},${k % 50},${Math.floor(k / 50) % 64},${(k * 7919) % 1000 / 8}`).join('\n') + '\n';
    const zipped = gzipSync(Buffer.from(text));
    const dir = tempDirForTest('csv-cut');
    const path = join(dir, 'cut.csv.gz');
    writeFileSync(path, zipped.subarray(0, Math.floor(zipped.length / 2)));
    const seen: number[] = [];
    let message = '';
    try {
      for await (const e of readCsvTowers(path, { grid, fileLabel: 'cut.csv.gz' })) {
        expect(e.problem).toBeNull();
        seen.push(e.event);
      }
    } catch (error) {
      message = (error as Error).message;
    }
    expect(seen.length).toBeGreaterThan(10);
    expect(seen).toEqual(seen.map((_, k) => k));
    expect(message).toMatch(/^cut\.csv\.gz, byte \d+: gzip data is truncated \(unexpected end of file\); offsets count uncompressed bytes$/);
  });

  it('reports the events before an unreadable line when reading a stream', async () => {
    const text = HEADER + '0,0,0,1\n1,0,0,1\n2,0,0,1\n1,0,0,1\n';
    const seen: number[] = [];
    let message = '';
    try {
      for await (const e of readCsvTowers(Readable.from([Buffer.from(text)]), { grid, fileLabel: 'towers.csv' })) seen.push(e.event);
    } catch (error) {
      message = (error as Error).message;
    }
    expect(seen).toEqual([0, 1, 2]);
    expect(message).toBe(`towers.csv, line 5, byte ${text.lastIndexOf('1,0,0,1')}: event number 1 after 2: numbers must not decrease (the rest of the file is unreadable)`);
  });
});
