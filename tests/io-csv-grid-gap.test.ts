// CSV tower files: the cap on event-number jumps (spec section 1, maxEventGap) and the grid a
// CSV states about itself in a `# grid` line before the header. Invented towers.

import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { csvGridLine, parseCsvGridLine } from '../host/input/csv-grid.js';
import { openCsvTowers, parseCsvTowersText } from '../host/input/csv-towers.js';
import { openEventSource } from '../host/input/event-source.js';
import { DEFAULT_GRID, type Grid } from '../host/types.js';
import { tempDirForTest } from './support/temp-dir.js';

const HEADER = 'event,ieta,iphi,et\n';
const SMALL: Grid = { etaMin: -1.2000000000000002, etaMax: 0.7, etaBins: 6, phiBins: 10 };

describe('CSV event-number jumps', () => {
  it('a jump above the default cap of 1,000,000 ends the file, keeping the events before, naming line and byte', () => {
    const text = HEADER + '0,0,0,1\n1,0,0,1\n1000002,0,0,1\n';
    const { events, error } = parseCsvTowersText(text, DEFAULT_GRID, 'towers.csv');
    expect(events.map((e) => e.event)).toEqual([0, 1]);
    expect(error?.message).toBe(`towers.csv, line 4, byte ${text.indexOf('1000002')}: event number 1000002 after 1 jumps more than 1000000 numbers (--max-event-gap; the rest of the file is unreadable)`);
  });

  it('a jump of exactly the cap is read, with the empty events between', () => {
    const { events, error } = parseCsvTowersText(HEADER + '0,0,0,1\n5,0,0,1\n', DEFAULT_GRID, 'towers.csv', { maxEventGap: 5 });
    expect(error).toBeNull();
    expect(events.map((e) => e.event)).toEqual([0, 1, 2, 3, 4, 5]);
  });

  it('counts the first event\'s jump from -1', () => {
    expect(parseCsvTowersText(HEADER + '4,0,0,1\n', DEFAULT_GRID, 'towers.csv', { maxEventGap: 5 }).error).toBeNull();
    const { events, error } = parseCsvTowersText(HEADER + '5,0,0,1\n', DEFAULT_GRID, 'towers.csv', { maxEventGap: 5 });
    expect(events).toEqual([]);
    expect(error?.message).toBe('towers.csv, line 2, byte 19: event number 5 as the first event jumps more than 5 numbers (--max-event-gap; the rest of the file is unreadable)');
  });
});

describe('the grid a CSV states', () => {
  it('round-trips to the bit through its comment line', () => {
    const line = csvGridLine(SMALL);
    expect(line.endsWith('\n')).toBe(true);
    expect(parseCsvGridLine(line.trimEnd(), 'x.csv', 0, 1)).toEqual(SMALL);
    expect(parseCsvGridLine('# made by hand', 'x.csv', 0, 1)).toBeNull();
  });

  it('is the grid an event source reads the CSV on, when no other grid is given', async () => {
    const dir = tempDirForTest('csv-grid');
    const path = join(dir, 'small.csv');
    writeFileSync(path, csvGridLine(SMALL) + HEADER + '0,5,9,2.5\n');
    const source = await openEventSource(path, { grid: { ...DEFAULT_GRID } });
    expect(source.header.grid).toEqual(SMALL);
    const records = [];
    for await (const record of source.records) records.push(record);
    expect(records).toHaveLength(1);
  });

  it('read on another grid given by options is refused, naming the line of the statement', async () => {
    const dir = tempDirForTest('csv-grid-clash');
    const path = join(dir, 'small.csv');
    writeFileSync(path, '# invented towers\n' + csvGridLine(SMALL) + HEADER + '0,5,9,2.5\n');
    const other: Grid = { ...DEFAULT_GRID, phiBins: 32 };
    await expect(openCsvTowers(path, { grid: other, fileLabel: 'small.csv' })).rejects.toThrow(/^small\.csv, line 2, byte 18: the file states the grid eta \[-1\.2000000000000002, 0\.7\) in 6 bins, phi in 10 bins, but the grid given is /);
  });

  it('that differs from the grid a plain reader was given ends the file at that line', async () => {
    const text = csvGridLine(SMALL) + HEADER + '0,5,9,2.5\n';
    const { events, error } = parseCsvTowersText(text, DEFAULT_GRID, 'small.csv');
    expect(events).toEqual([]);
    expect(error?.message).toMatch(/^small\.csv, line 1, byte 0: the file states the grid .* but is read on eta \[-2\.5, 2\.5\) in 50 bins/);
  });

  it('is refused when malformed, naming line and byte', () => {
    const { error } = parseCsvTowersText('# grid etaMin=-1 etaMax=1 etaBins=0 phiBins=8\n' + HEADER, DEFAULT_GRID, 'bad.csv');
    expect(error?.message).toBe('bad.csv, line 1, byte 0: grid statement: etaBins must be an integer in 1..4096, got 0 (the rest of the file is unreadable)');
  });

  it('puts towers of a smaller grid where they belong instead of misplacing them on the default grid', async () => {
    const dir = tempDirForTest('csv-grid-place');
    const path = join(dir, 'small.csv');
    writeFileSync(path, csvGridLine(SMALL) + HEADER + '0,5,9,2.5\n');
    const opened = await openCsvTowers(path, {});
    expect(opened.origin).toBe('stated in the file');
    const towers = [];
    for await (const event of opened.events) towers.push(...event.towerIndex);
    expect(towers).toEqual([5 * SMALL.phiBins + 9]);
  });
});
