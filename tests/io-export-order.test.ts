// `jetlag export --format csv` of a file whose events are out of order or repeated: CSV rows of
// an event come together and event numbers never decrease (clustering-spec.md section 1), so
// such an event is named on stderr and left out, and the CSV written reads back as the events
// that were written, not as a file that breaks off or merges two events. Invented towers.

import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main as exportMain } from '../host/cli/commands/export.js';
import { parseCsvTowersText } from '../host/input/csv-towers.js';
import { ReferenceClusterer } from '../host/clustering/reference.js';
import { JetsFileWriter } from '../host/output/jets-writer.js';
import { EventFileWriter } from '../host/output/record-writer.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS } from '../host/types.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('export-order');
const ORDER = [5, 3, 3, 10];

async function exportToCsv(path: string) {
  const out = `${path}.csv`;
  const fake = fakeIo();
  const code = await exportMain([path, '--format', 'csv', '--out', out, '--force'], fake.io); // each test exports again
  return { code, csv: readFileSync(out, 'utf8'), stderr: fake.stderr() };
}

async function eventsFile(): Promise<string> {
  const path = join(dir, 'order.jetlag');
  const writer = await EventFileWriter.open(path, { grid: DEFAULT_GRID, producer: 'test', label: 'invented' }, { force: true }); // made again by each test
  for (const [k, event] of ORDER.entries()) await writer.writeEvent({ event, towerIndex: Int32Array.of(100), towerEt: Float64Array.of(5 + k) });
  await writer.close();
  return path;
}

async function jetsFile(): Promise<string> {
  const path = join(dir, 'order.jets');
  const clusterer = new ReferenceClusterer(DEFAULT_GRID, DEFAULT_SETTINGS);
  const writer = await JetsFileWriter.open(path, DEFAULT_GRID, { ...DEFAULT_SETTINGS, engine: 'reference' });
  for (const [k, event] of ORDER.entries()) await writer.writeJets({ event, jets: clusterer.cluster(Int32Array.of(100), Float64Array.of(5 + k)) });
  await writer.close();
  return path;
}

describe('export to CSV of events out of order', () => {
  it('writes a CSV that reads back whole, with the events in increasing order', async () => {
    const { csv } = await exportToCsv(await eventsFile());
    const { events, error } = parseCsvTowersText(csv, DEFAULT_GRID);
    expect(error).toBeNull();
    expect(events.filter((e) => e.towerIndex.length > 0).map((e) => [e.event, e.towerEt[0]])).toEqual([[5, 5], [10, 8]]);
  });

  it('names each event left out on stderr', async () => {
    const { stderr, code } = await exportToCsv(await eventsFile());
    expect(stderr.match(/event 3 after event 5 .*left out/g)).toHaveLength(2);
    expect(code).toBe(0);
  });

  it('leaves a repeated or decreasing event out of a jets CSV too', async () => {
    const { csv } = await exportToCsv(await jetsFile());
    expect(csv.trim().split('\n').slice(1).map((row) => row.split(',')[0])).toEqual(['5', '10']);
  });
});
