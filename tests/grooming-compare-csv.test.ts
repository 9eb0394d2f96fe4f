// `jetlag compare` of a groomed candidate as CSV (clustering-spec.md sections 7 and 12): the
// groomed columns `jetlag export` writes are read, so one candidate gives the same groomed
// figures as CSV, as JSON lines and as the jets file; a CSV without them gets a line saying so.

import { join } from 'node:path';
import { readFileSync, writeFileSync } from 'node:fs';
import { beforeAll, describe, expect, it } from 'vitest';
import { main as cluster } from '../host/cli/commands/cluster.js';
import { main as compare } from '../host/cli/commands/compare.js';
import { main as exportText } from '../host/cli/commands/export.js';
import { main as generate } from '../host/cli/commands/generate.js';
import { openCandidate, type CandidateEvent } from '../host/input/candidate-reader.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('grooming-compare-csv');
const events = join(dir, 'events.pb');
const groomedJets = join(dir, 'groomed.pb');
const plainJets = join(dir, 'plain.pb');
const groomingArgs = ['--trim', '0.2:0.05', '--softdrop', '0.1:0'];
const settingsArgs = ['--radius', '1.0', '--ptmin', '20'];

interface CompareJson { groomed: { groomer: string; pairs: number }[] }

async function compareRun(candidate: string): Promise<{ json: CompareJson; stderr: string }> {
  const io = fakeIo();
  await compare([events, candidate, '--json', '-', ...settingsArgs, ...groomingArgs], io.io);
  return { json: JSON.parse(io.stdout()) as CompareJson, stderr: io.stderr() };
}

async function exportAs(jets: string, format: 'csv' | 'jsonl', out: string): Promise<void> {
  expect(await exportText([jets, '--format', format, '--out', out, '-q'], fakeIo().io)).toBe(0);
}

beforeAll(async () => {
  expect(await generate(['--events', '4', '--pileup', '30', '--seed', '7', '--out', events, '-q'], fakeIo().io)).toBe(0);
  expect(await cluster([events, ...settingsArgs, ...groomingArgs, '-q', '--out', groomedJets], fakeIo().io)).toBe(0);
  expect(await cluster([events, ...settingsArgs, '-q', '--out', plainJets], fakeIo().io)).toBe(0);
});

describe('jetlag compare of a groomed candidate as CSV', () => {
  it('gives the same groomed figures from the CSV, the JSON lines and the jets file of one candidate', async () => {
    const csv = join(dir, 'groomed.csv');
    const jsonl = join(dir, 'groomed.jsonl');
    await exportAs(groomedJets, 'csv', csv);
    await exportAs(groomedJets, 'jsonl', jsonl);
    const fromCsv = await compareRun(csv);
    const fromJsonl = await compareRun(jsonl);
    const fromJetsFile = await compareRun(groomedJets);
    expect(fromCsv.json.groomed.map((g) => g.groomer)).toEqual(['trim', 'softdrop']);
    expect(fromCsv.json.groomed.every((g) => g.pairs > 0)).toBe(true);
    expect(fromCsv.json.groomed).toEqual(fromJsonl.json.groomed);
    expect(fromCsv.json.groomed).toEqual(fromJetsFile.json.groomed);
    expect(fromCsv.stderr).not.toContain('pt and mass not compared');
  });

  it('says in one line per groomer that the groomed quantities were not compared when the CSV has no groomed columns', async () => {
    const csv = join(dir, 'plain.csv');
    await exportAs(plainJets, 'csv', csv);
    const { json, stderr } = await compareRun(csv);
    expect(json.groomed).toEqual([]);
    const notes = stderr.split('\n').filter((line) => line.includes('pt and mass not compared'));
    expect(notes).toEqual([
      'jetlag compare: trimmed pt and mass not compared: the candidate (csv) gives none, its header has no trim columns (jetlag export writes them for groomed jets)',
      'jetlag compare: soft-dropped pt and mass not compared: the candidate (csv) gives none, its header has no softdrop columns (jetlag export writes them for groomed jets)',
    ]);
  });

  it('makes an event with a malformed groomed cell invalid, naming its line, byte and column', async () => {
    const csv = join(dir, 'malformed.csv');
    await exportAs(groomedJets, 'csv', csv);
    const rows = readFileSync(csv, 'utf8').split('\n');
    const massField = rows[0].split(',').indexOf('trimM');
    const cells = rows[2].split(',');
    cells[massField] = '1.5x';
    rows[2] = cells.join(',');
    const text = rows.join('\n');
    writeFileSync(csv, text);
    const byteOffset = Buffer.byteLength(`${rows[0]}\n${rows[1]}\n`);
    const source = await openCandidate(csv);
    const read: CandidateEvent[] = [];
    for await (const event of source.events) read.push(event);
    const broken = read.find((event) => event.event === Number(cells[0]))!;
    expect(broken.error).toBe(`row at line 3, byte ${byteOffset}: bad trimM "1.5x"`);
    expect(read.filter((event) => event.error === '').every((event) => event.groomed?.trim && event.groomed.softdrop)).toBe(true);
  });
});
