import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { Readable } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { UsageError } from '../host/errors.js';
import { main as exportMain } from '../host/cli/commands/export.js';
import { main as importMain } from '../host/cli/commands/import.js';
import { decodeEventRecord } from '../host/formats/event-codec.js';
import { openEventSource } from '../host/input/event-source.js';
import { openCandidate } from '../host/input/candidate-reader.js';
import { JetsFileWriter } from '../host/output/jets-writer.js';
import { EventFileWriter } from '../host/output/record-writer.js';
import { formatErrorLine, formatJetsLine } from '../host/formats/jets-jsonl.js';
import type { JetSet } from '../host/types.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('commands');
let n = 0;
const temp = (name: string) => join(dir, `${n++}-${name}`);

async function run(command: typeof importMain, argv: string[], stdinText = '') {
  const t = fakeIo({ stdin: stdinText });
  const code = await command(argv, t.io);
  return { code, stdout: t.stdout(), stdoutBytes: t.stdoutBytes(), stderr: t.stderr() };
}

async function recordsOf(path: string) {
  const source = await openEventSource(path);
  const events = [];
  for await (const r of source.records) events.push(decodeEventRecord(r.bytes));
  return { header: source.header, events };
}

// invented towers on the default grid, numbers in their shortest round-trip form
const CANONICAL = [
  'event,ieta,iphi,et',
  '0,0,0,12',
  '0,49,63,1.5',
  '0,10,5,1e-7',
  '2,3,4,-0.25',
  '2,3,5,1e+21',
  '3,0,1,0.1',
].join('\n') + '\n';

describe('jetlag import', () => {
  it('writes every CSV event, empty ones included, with the grid in the header', async () => {
    const csv = temp('towers.csv');
    writeFileSync(csv, CANONICAL);
    const out = temp('events.pb');
    const r = await run(importMain, ['--csv', csv, '--out', out, '--label', 'bench run, fictional']);
    expect(r.code).toBe(0);
    expect(r.stderr).toBe(`jetlag import: wrote 4 events (6 towers, 0 invalid) to ${out}\n`);
    const { header, events } = await recordsOf(out);
    expect(header.grid).toEqual({ etaMin: -2.5, etaMax: 2.5, etaBins: 50, phiBins: 64 });
    expect(header.label).toBe('bench run, fictional');
    expect(header.producer).toBe('jetlag 0.1.0 import');
    expect(events.map((e) => [e.event, Array.from(e.towerIndex), Array.from(e.towerEt)])).toEqual([
      [0, [0, 49 * 64 + 63, 10 * 64 + 5], [12, 1.5, 1e-7]],
      [1, [], []],
      [2, [3 * 64 + 4, 3 * 64 + 5], [-0.25, 1e21]],
      [3, [1], [0.1]],
    ]);
  });

  it('keeps an invalid CSV event as a record with its error text and CSV offset, and the events around it', async () => {
    const csv = temp('bad.csv');
    const text = 'event,ieta,iphi,et\n0,0,0,1\n1,0,0,1e\n2,0,0,2\n';
    writeFileSync(csv, text);
    const out = temp('events.pb');
    const r = await run(importMain, ['--csv', csv, '--out', out]);
    expect(r.code).toBe(0);
    expect(r.stderr).toBe(
      `jetlag import: ${csv}, event 1 (line 3), byte 27: et "1e" is not a decimal number (kept as an invalid event)\n` +
      `jetlag import: wrote 3 events (2 towers, 1 invalid) to ${out}\n`);
    const { events } = await recordsOf(out);
    expect(events.map((e) => [e.event, e.towerEt.length, e.error])).toEqual([
      [0, 1, ''],
      [1, 0, `et "1e" is not a decimal number (CSV ${csv}, line 3, byte 27)`],
      [2, 1, ''],
    ]);
  });

  it('writes the events before an unreadable line and exits 2 with one error line', async () => {
    const csv = temp('decreasing.csv');
    writeFileSync(csv, 'event,ieta,iphi,et\n0,0,0,1\n1,0,0,1\n2,0,0,1\n1,0,1,1\n');
    const out = temp('events.pb');
    const r = await run(importMain, ['--csv', csv, '--out', out, '--quiet']);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe(`jetlag import: ${csv}, line 5, byte 43: event number 1 after 2: numbers must not decrease (the rest of the file is unreadable); 3 events before it written to ${out}\n`);
    expect((await recordsOf(out)).events.map((e) => e.event)).toEqual([0, 1, 2]);
  });

  it('reads stdin and writes stdout with -, gzip on request', async () => {
    const r = await run(importMain, ['--csv', '-', '--out', '-', '--gzip', '-q', '--eta-bins', '4', '--phi-bins', '8', '--eta-min', '-1', '--eta-max', '1'], 'event,ieta,iphi,et\n0,3,7,2\n');
    expect(r.code).toBe(0);
    expect(Array.from(r.stdoutBytes.subarray(0, 2))).toEqual([0x1f, 0x8b]);
    const source = await openEventSource(Readable.from([r.stdoutBytes]));
    expect(source.header.grid).toEqual({ etaMin: -1, etaMax: 1, etaBins: 4, phiBins: 8 });
    const events = [];
    for await (const record of source.records) events.push(decodeEventRecord(record.bytes));
    expect(events.map((e) => [e.event, Array.from(e.towerIndex), Array.from(e.towerEt)])).toEqual([[0, [31], [2]]]);
  });

  it('checks its options', async () => {
    await expect(run(importMain, ['--out', 'x.pb'])).rejects.toThrow(new UsageError('import: --csv <file> is required'));
    await expect(run(importMain, ['--csv', 'x.csv'])).rejects.toThrow(new UsageError('import: --out <events> is required'));
    await expect(run(importMain, ['--csv', 'x.csv', '--out', 'y.pb', '--eta-bins', '0'])).rejects.toThrow(UsageError);
  });

  it('leaves no output file when the input cannot be opened', async () => {
    const out = temp('never.pb');
    const r = await run(importMain, ['--csv', join(dir, 'missing.csv'), '--out', out]);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe(`jetlag import: ${join(dir, 'missing.csv')}: cannot open: no such file\n`);
    expect(existsSync(out)).toBe(false);
  });
});

describe('jetlag export of events', () => {
  it('gives back the imported CSV row for row (round trip CSV -> event file -> CSV)', async () => {
    const csv = temp('towers.csv');
    writeFileSync(csv, CANONICAL);
    const events = temp('events.pb.gz');
    expect((await run(importMain, ['--csv', csv, '--out', events, '--gzip', '-q'])).code).toBe(0);
    const r = await run(exportMain, [events, '-q']);
    expect(r.code).toBe(0);
    expect(r.stdout).toBe(CANONICAL);
  });

  it('writes CSV that imports to the same records, whatever literal forms the input used', async () => {
    const csv = temp('forms.csv');
    writeFileSync(csv, 'event,ieta,iphi,et\r\n0,+1,2,.5\r\n0,1,3,5.\r\n1,0,0,+3\r\n1,0,1,1E-3\r\n');
    const first = temp('first.pb');
    await run(importMain, ['--csv', csv, '--out', first, '-q']);
    const exported = temp('exported.csv');
    expect((await run(exportMain, [first, '--out', exported, '-q'])).code).toBe(0);
    expect(readFileSync(exported, 'utf8')).toBe('event,ieta,iphi,et\n0,1,2,0.5\n0,1,3,5\n1,0,0,3\n1,0,1,0.001\n');
    const second = temp('second.pb');
    await run(importMain, ['--csv', exported, '--out', second, '-q']);
    expect((await recordsOf(second)).events).toEqual((await recordsOf(first)).events);
  });

  it('writes events as JSON lines, invalid ones as error lines (round trip CSV -> event file -> JSON lines)', async () => {
    const csv = temp('mixed.csv');
    writeFileSync(csv, 'event,ieta,iphi,et\n0,1,2,0.5\n0,1,3,7\n1,1,2,x\n3,0,0,1\n');
    const events = temp('events.pb');
    await run(importMain, ['--csv', csv, '--out', events, '-q']);
    const r = await run(exportMain, [events, '--format', 'jsonl']);
    expect(r.code).toBe(0);
    expect(r.stdout).toBe([
      '{"event":0,"towers":[[1,2,0.5],[1,3,7]]}',
      formatErrorLine(1, `et "x" is not a decimal number (CSV ${csv}, line 4, byte 37)`),
      '{"event":2,"towers":[]}',
      '{"event":3,"towers":[[0,0,1]]}',
    ].join('\n') + '\n');
    expect(r.stderr.split('\n')[0]).toMatch(new RegExp(`^jetlag export: ${events.replace(/[.]/g, '\\.')}, event 1, byte \\d+: et "x" is not a decimal number .* \\(invalid event, written as an error line\\)$`));
  });

  it('reports invalid events on stderr when writing CSV, and counts them', async () => {
    const csv = temp('mixed.csv');
    writeFileSync(csv, 'event,ieta,iphi,et\n0,1,2,0.5\n1,99,2,1\n');
    const events = temp('events.pb');
    await run(importMain, ['--csv', csv, '--out', events, '-q']);
    const out = temp('out.csv');
    const r = await run(exportMain, [events, '--out', out]);
    expect(r.code).toBe(0);
    expect(readFileSync(out, 'utf8')).toBe('event,ieta,iphi,et\n0,1,2,0.5\n');
    const lines = r.stderr.trimEnd().split('\n');
    expect(lines).toHaveLength(2);
    expect(lines[0]).toMatch(/event 1, byte \d+: tower \(ieta 99, iphi 2\) is outside the grid of 50 x 64 towers .*\(invalid event, no CSV rows written\)$/);
    expect(lines[1]).toBe(`jetlag export: read 2 events (1 invalid), wrote 1 towers to ${out}`);
  });

  it('exports a CSV input too, on the grid given', async () => {
    const csv = temp('small-grid.csv');
    writeFileSync(csv, 'event,ieta,iphi,et\n0,3,7,1\n0,4,0,1\n');
    const r = await run(exportMain, [csv, '--format', 'jsonl', '--eta-bins', '4', '--phi-bins', '8', '-q']);
    expect(r.stdout).toMatch(/^\{"event":0,"error":"tower \(ieta 4, iphi 0\) is outside the grid of 4 x 8 towers \(the grid assumed: eta \[-2\.5, 2\.5\) in 4 bins, phi in 8 bins, given; .*\(line 3\)"\}\n$/);
  });

  it('stops at a truncated event file after writing the events before it, exit 2', async () => {
    const csv = temp('towers.csv');
    writeFileSync(csv, CANONICAL);
    const events = temp('events.pb');
    await run(importMain, ['--csv', csv, '--out', events, '-q']);
    const bytes = readFileSync(events);
    const cut = temp('cut.pb');
    writeFileSync(cut, bytes.subarray(0, bytes.length - 3));
    const r = await run(exportMain, [cut, '-q']);
    expect(r.code).toBe(2);
    expect(r.stdout).toBe(CANONICAL.split('\n').slice(0, 6).join('\n') + '\n');
    expect(r.stderr).toMatch(new RegExp(`^jetlag export: ${cut.replace(/[.]/g, '\\.')}, event 3, byte \\d+: truncated record: length \\d+ but only \\d+ bytes follow; 3 records before it written to <stdout>\\n$`));
  });

  it('reports a garbage record inside an event file and keeps the events before and after it', async () => {
    const events = temp('garbage.pb');
    const writer = await EventFileWriter.open(events, { grid: { etaMin: -2.5, etaMax: 2.5, etaBins: 50, phiBins: 64 }, producer: 'test', label: '' });
    await writer.writeEvent({ event: 0, towerIndex: [65], towerEt: [1] });
    await writer.records.write(new Uint8Array([0x08, 0x01, 0xff, 0xff, 0xff])); // event 1, then a bad tag
    await writer.records.write(new Uint8Array([0x07])); // wire type 7 right away: no event number
    await writer.writeEvent({ event: 3, towerIndex: [0], towerEt: [2] });
    await writer.close();
    const r = await run(exportMain, [events, '--format', 'jsonl']);
    expect(r.code).toBe(0);
    expect(r.stdout).toBe(
      '{"event":0,"towers":[[1,1,1]]}\n' +
      '{"event":1,"error":"bad event record: at record byte 2: truncated varint"}\n' +
      '{"event":3,"towers":[[0,0,2]]}\n');
    const lines = r.stderr.trimEnd().split('\n');
    expect(lines[1]).toMatch(/, record 2, byte \d+: bad event record: at record byte 0: bad field tag 7 \(invalid event, written as an error line\)$/);
    expect(lines[2]).toBe(`jetlag export: read 4 events (2 invalid), wrote 2 towers to <stdout>`);
  });

  it('rejects an unknown format', async () => {
    await expect(run(exportMain, ['x.pb', '--format', 'xml'])).rejects.toThrow(new UsageError('export: --format must be csv, jsonl or events-csv, got "xml"'));
  });
});

describe('jetlag export of jets', () => {
  const jets: JetSet = {
    count: 2, px: Float64Array.of(10, -1), py: Float64Array.of(0, 2), pz: Float64Array.of(1, 0.5), energy: Float64Array.of(10.05, 2.3),
    pt: Float64Array.of(10, 2.23606797749979), rapidity: Float64Array.of(0.1, 0.2), phi: Float64Array.of(0, 2.0344439357957027),
    mass: Float64Array.of(0, 0.1), towerCount: Int32Array.of(2, 1), towerStart: Int32Array.of(0, 2), towers: Int32Array.of(4, 9, 100),
  };

  async function jetsFile(): Promise<string> {
    const path = temp('jets.pb');
    const writer = await JetsFileWriter.open(path, { etaMin: -2.5, etaMax: 2.5, etaBins: 50, phiBins: 64 },
      { p: -1, radius: 0.4, ptMin: 0, threshold: 0, recombination: 'e', engine: 'reference' });
    await writer.writeJets({ event: 0, jets, clusterTimeNs: 5 });
    await writer.writeJets({ event: 1, error: 'tower 0 has, "odd" et' });
    await writer.close();
    return path;
  }

  it('writes the cluster command\'s JSON lines', async () => {
    const r = await run(exportMain, [await jetsFile(), '--format', 'jsonl', '-q']);
    expect(r.code).toBe(0);
    // the file records the cluster time but no tower count: "towers" is null, not 0
    expect(r.stdout).toBe(formatJetsLine(0, jets).replace('{"event":0,', '{"event":0,"cluster_time_ns":5,"towers":null,') + '\n' + formatErrorLine(1, 'tower 0 has, "odd" et') + '\n');
  });

  it('writes one CSV row per jet, in the columns compare reads, and reports invalid events on stderr', async () => {
    const path = await jetsFile();
    const r = await run(exportMain, [path]);
    expect(r.code).toBe(0);
    expect(r.stdout).toBe([
      'event,pt,y,phi,m,cluster_time_ns,towers',
      '0,10,0.1,0,0,5,',
      '0,2.23606797749979,0.2,2.0344439357957027,0.1,5,',
    ].join('\n') + '\n');
    expect(r.stderr.split('\n')[0]).toMatch(new RegExp(`^jetlag export: ${path.replace(/[.]/g, '\\.')}, event 1, byte \\d+: tower 0 has, "odd" et \\(invalid event, no CSV rows written\\)$`));
    expect(r.stderr.split('\n')[1]).toBe('jetlag export: read 2 events (1 invalid), wrote 2 jets to <stdout>');
  });

  it('writes CSV that compare reads back as the same jets', async () => {
    const csvPath = temp('jets.csv');
    expect((await run(exportMain, [await jetsFile(), '--out', csvPath, '-q'])).code).toBe(0);
    const candidate = await openCandidate(csvPath);
    expect(candidate.format).toBe('csv');
    const seen = [];
    for await (const e of candidate.events) seen.push(e);
    expect(seen.map((e) => [e.event, Array.from(e.pt), Array.from(e.phi), Array.from(e.mass)])).toEqual([
      [0, Array.from(jets.pt), Array.from(jets.phi), Array.from(jets.mass)],
    ]);
  });

  it('reports an undecodable jets record, goes on, and exits 2', async () => {
    const good = readFileSync(await jetsFile());
    const broken = temp('broken-jets.pb');
    // a record of 2 bytes: field 2 (px) as a varint
    writeFileSync(broken, Buffer.concat([good, Buffer.from([2, 0x10, 0x01])]));
    const r = await run(exportMain, [broken, '--format', 'jsonl']);
    expect(r.code).toBe(2);
    expect(r.stdout.split('\n')).toHaveLength(3);
    expect(r.stderr.split('\n')[0]).toBe(`jetlag export: ${broken}, record 2, byte ${good.length}: bad jets record: at record byte 0: field 2 (px) has wire type 0 (varint), expected packed or fixed64`);
  });

  it('leaves no file when the input cannot be opened', async () => {
    const out = temp('none.csv');
    await expect(run(exportMain, [join(dir, 'missing.pb'), '--out', out])).rejects.toThrow(`${join(dir, 'missing.pb')}: cannot open: no such file`);
    expect(existsSync(out)).toBe(false);
  });
});
