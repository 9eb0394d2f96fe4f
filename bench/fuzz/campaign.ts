// The fuzz campaign: valid inputs of every kind the readers take, mutated (mutate.ts) and fed
// to the readers in this process, the way the commands use them. What must hold for every
// input: no exception other than the readers' own (no TypeError, RangeError, ...), no input
// that takes longer than a bound, and every rejection one line naming the byte offset.
//
// API
//   runCampaign({ seed, count, boundMs?, onCase? }): Promise<CampaignTally>
//     case k uses seed and k only, so any finding is reproduced by its seed and case number
//   formatTally(tally): string                     the table `npm run fuzz` prints
//   makeSeeds(), kindOf(detail)                     the valid inputs and the grouping of
//                                                  rejections, for fuzz/processes.ts too
//
// Inputs (all invented, from the toy generator or written here): an event file, the same
// gzip-compressed, an event file of raw deposits, a jets file, a CSV tower file (one with a
// `# grid` line), candidate JSON lines and CSV, and a run summary. Caps used: records of at
// most 1 MiB and CSV event-number jumps of at most 1000, so one input is bounded in memory
// and time; the default caps are checked by their own tests.

import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Readable } from 'node:stream';
import { gzipSync } from 'node:zlib';
import { InputError } from '../../host/errors.js';
import { decodeJetsRecord, encodeJetsFileHeader, encodeJetsRecord } from '../../host/formats/jets-codec.js';
import { encodeEventRecord } from '../../host/formats/event-codec.js';
import { encodeFileHeader } from '../../host/formats/file-header.js';
import { delimit } from '../../host/formats/wire.js';
import { formatJetsLine } from '../../host/formats/jets-jsonl.js';
import { generateEvents } from '../../host/generator/generate.js';
import { ReferenceClusterer } from '../../host/clustering/reference.js';
import { openCandidate } from '../../host/input/candidate-reader.js';
import { csvGridLine } from '../../host/input/csv-grid.js';
import { openRecordFile } from '../../host/input/event-source.js';
import { EventTowerReader } from '../../host/input/event-towers.js';
import { mergeSummaries, readSummary } from '../../host/measure/summary-merge.js';
import { RunTally } from '../../host/measure/run-tally.js';
import { describeMachine, renderSummary } from '../../host/measure/summary.js';
import { makeRandom, mix32 } from '../../host/random.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS, type Grid } from '../../host/types.js';
import { mutate } from './mutate.js';

const MAX_RECORD_BYTES = 1 << 20;
const MAX_EVENT_GAP = 1000;
const SMALL_GRID: Grid = { etaMin: -1, etaMax: 1.5, etaBins: 10, phiBins: 16 };

export interface Finding {
  kind: 'crash' | 'slow' | 'no offset' | 'not one line';
  seed: number;
  caseNumber: number;
  input: string;
  how: string;
  message: string;
}

export interface CampaignTally {
  cases: number;
  accepted: number;
  /** rejections by what was wrong (numbers left out) */
  rejected: Map<string, number>;
  /** problems of single events or records inside accepted inputs (invalid events) */
  eventProblems: number;
  findings: Finding[];
  byInput: Map<string, number>;
  slowestMs: number;
}

export interface Seed {
  name: string;
  bytes: Uint8Array;
  read: (bytes: Uint8Array, context: ReadContext) => Promise<number>;
}

interface ReadContext {
  /** a scratch file for readers that take a path */
  scratch: string;
  /** called with every per-event problem text, to check it is one line */
  problem: (text: string) => void;
}

function stream(bytes: Uint8Array): NodeJS.ReadableStream {
  return Readable.from([Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength)]);
}

function concat(parts: Uint8Array[]): Uint8Array {
  return Buffer.concat(parts.map((p) => Buffer.from(p.buffer, p.byteOffset, p.byteLength)));
}

/** events and jets files, CSV towers: what run, cluster and export do with each record */
async function readRecordFile(bytes: Uint8Array, context: ReadContext): Promise<number> {
  const source = await openRecordFile(stream(bytes), { fileLabel: 'fuzz', maxRecordBytes: MAX_RECORD_BYTES, maxEventGap: MAX_EVENT_GAP });
  let records = 0;
  const towers = source.format === 'jets-file' ? null : new EventTowerReader(source.header.grid);
  for await (const record of source.records) {
    records++;
    if (towers) {
      const result = towers.read(record.bytes);
      if (!result.ok) context.problem(result.problem);
    } else {
      try {
        const jets = decodeJetsRecord(record.bytes);
        if (jets.problem !== '') context.problem(jets.problem);
      } catch (error) {
        if (error instanceof TypeError || error instanceof RangeError) throw error;
        context.problem((error as Error).message);
      }
    }
  }
  return records;
}

async function readCandidate(bytes: Uint8Array, context: ReadContext): Promise<number> {
  const candidate = await openCandidate(stream(bytes), { fileLabel: 'fuzz', maxRecordBytes: MAX_RECORD_BYTES });
  let events = 0;
  for await (const event of candidate.events) {
    events++;
    if (event.error !== '') context.problem(event.error);
  }
  return events;
}

/** what merge does: read the file, check it, add it up */
async function readRunSummary(bytes: Uint8Array, context: ReadContext): Promise<number> {
  writeFileSync(context.scratch, bytes);
  const summary = readSummary(context.scratch);
  mergeSummaries([{ name: 'fuzz', summary }]);
  return 1;
}

export function makeSeeds(): Seed[] {
  const events = [...generateEvents(DEFAULT_GRID, { events: 6, pileup: 8, seed: 5, maxHardJets: 2 })];
  const header = encodeFileHeader({ kind: 'events', formatVersion: 1, grid: { ...DEFAULT_GRID }, producer: 'fuzz', label: 'invented' });
  const eventFile = concat([delimit(header), ...events.map((e) => delimit(encodeEventRecord({ event: e.event, towerIndex: e.towerIndex, towerEt: e.towerEt })))]);
  const raw = [...generateEvents(DEFAULT_GRID, { events: 3, pileup: 4, seed: 6, raw: true })];
  const rawFile = concat([delimit(header), ...raw.map((e) => delimit(encodeEventRecord({ event: e.event, depositEta: e.depositEta, depositPhi: e.depositPhi, depositEt: e.depositEt })))]);
  const clusterer = new ReferenceClusterer(DEFAULT_GRID, DEFAULT_SETTINGS);
  const jetSets = events.map((e) => clusterer.cluster(e.towerIndex, e.towerEt));
  const jetsFile = concat([
    encodeJetsFileHeader(DEFAULT_GRID, { ...DEFAULT_SETTINGS, engine: 'reference' }, { producer: 'fuzz', label: 'invented' }), // delimited already
    ...jetSets.map((jets, k) => delimit(encodeJetsRecord({ event: k, jets }))),
  ]);
  const csvRows = (grid: Grid) => events.flatMap((e) => Array.from(e.towerIndex, (t, k) => {
    const ieta = Math.floor(t / DEFAULT_GRID.phiBins) % grid.etaBins;
    return `${e.event},${ieta},${t % grid.phiBins},${e.towerEt[k]}`;
  }).filter((row, k, all) => all.findIndex((other) => other.split(',').slice(0, 3).join() === row.split(',').slice(0, 3).join()) === k));
  const csv = Buffer.from(['event,ieta,iphi,et', ...csvRows(DEFAULT_GRID)].join('\n') + '\n');
  const csvGrid = Buffer.from(csvGridLine(SMALL_GRID) + ['event,ieta,iphi,et', ...csvRows(SMALL_GRID)].join('\n') + '\n');
  const jsonl = Buffer.from(jetSets.map((jets, k) => formatJetsLine(k, jets)).join('\n') + '\n');
  const jetsCsv = Buffer.from(['event,pt,y,phi,m', ...jetSets.flatMap((jets, k) => Array.from({ length: jets.count }, (_, j) => `${k},${jets.pt[j]},${jets.rapidity[j]},${jets.phi[j]},${jets.mass[j]}`))].join('\n') + '\n');
  const summary = renderSummary(new RunTally(), {
    configuration: {
      file: 'fuzz.events', input: { label: 'invented', records: 6 }, engine: 'reference', grid: { ...DEFAULT_GRID }, settings: { ...DEFAULT_SETTINGS },
      workers: 1, batch: 16, arrival: { mode: 'closed', rateHz: null, seed: null }, budgetUs: 500, check: { mode: 'none', fraction: 0, seed: 1 },
      shard: { index: 0, count: 1 }, maxEvents: null, out: null,
    },
    shards: [{ index: 0, count: 1 }], machine: describeMachine(), partial: false, partialReason: null, wallSeconds: 1,
  });
  return [
    { name: 'event file', bytes: eventFile, read: readRecordFile },
    { name: 'event file, gzip', bytes: gzipSync(eventFile), read: readRecordFile },
    { name: 'event file, raw deposits', bytes: rawFile, read: readRecordFile },
    { name: 'jets file', bytes: jetsFile, read: readRecordFile },
    { name: 'CSV towers', bytes: csv, read: readRecordFile },
    { name: 'CSV towers, stated grid', bytes: csvGrid, read: readRecordFile },
    { name: 'candidate jets file', bytes: jetsFile, read: readCandidate },
    { name: 'candidate JSON lines', bytes: jsonl, read: readCandidate },
    { name: 'candidate CSV', bytes: jetsCsv, read: readCandidate },
    { name: 'run summary', bytes: Buffer.from(JSON.stringify(summary, null, 2) + '\n'), read: readRunSummary },
  ];
}

/** what was wrong, without the numbers and quoted text that make every message different */
export function kindOf(detail: string): string {
  return detail.replace(/"(?:[^"\\]|\\.)*"/g, '"…"').replace(/\d+(\.\d+)?(e[+-]?\d+)?/g, '#').replace(/\s*\(.*$/, '').slice(0, 90);
}

export interface CampaignOptions {
  seed: number;
  count: number;
  /** an input taking longer than this is a finding (default 5000 ms) */
  boundMs?: number;
  onCase?: (caseNumber: number, tally: CampaignTally) => void;
}

export async function runCampaign(options: CampaignOptions): Promise<CampaignTally> {
  const seeds = makeSeeds();
  const boundMs = options.boundMs ?? 5000;
  const tally: CampaignTally = { cases: 0, accepted: 0, rejected: new Map(), eventProblems: 0, findings: [], byInput: new Map(), slowestMs: 0 };
  const dir = mkdtempSync(join(tmpdir(), 'jetlag-fuzz-'));
  const context: ReadContext = {
    scratch: join(dir, 'summary.json'),
    problem: (text) => {
      tally.eventProblems++;
      if (text.includes('\n')) current.findings.push({ kind: 'not one line', message: text });
    },
  };
  const current = { findings: [] as { kind: Finding['kind']; message: string }[] };
  try {
    for (let caseNumber = 0; caseNumber < options.count; caseNumber++) {
      const random = makeRandom(mix32(options.seed * 0x9e3779b1 + caseNumber));
      const seed = seeds[Math.floor(random() * seeds.length)];
      const donor = seeds[Math.floor(random() * seeds.length)].bytes;
      const { bytes, how } = mutate(seed.bytes, donor, random);
      current.findings = [];
      const started = performance.now();
      try {
        await seed.read(bytes, context);
        tally.accepted++;
      } catch (error) {
        if (error instanceof InputError) {
          if (error.offset === undefined) current.findings.push({ kind: 'no offset', message: error.message });
          if (error.message.includes('\n')) current.findings.push({ kind: 'not one line', message: error.message });
          const kind = kindOf(error.detail);
          tally.rejected.set(kind, (tally.rejected.get(kind) ?? 0) + 1);
        } else if (error instanceof Error && error.constructor === Error && seed.read === readRunSummary) {
          // merge's own refusals of a summary that reads but does not add up: one line, no offset to give
          if (error.message.includes('\n')) current.findings.push({ kind: 'not one line', message: error.message });
          const kind = `summary refused: ${kindOf(error.message.replace(/^fuzz: /, ''))}`;
          tally.rejected.set(kind, (tally.rejected.get(kind) ?? 0) + 1);
        } else {
          current.findings.push({ kind: 'crash', message: String((error as Error)?.stack ?? error).split('\n').slice(0, 3).join(' | ') });
        }
      }
      const elapsedMs = performance.now() - started;
      tally.slowestMs = Math.max(tally.slowestMs, elapsedMs);
      if (elapsedMs > boundMs) current.findings.push({ kind: 'slow', message: `${elapsedMs.toFixed(0)} ms` });
      for (const finding of current.findings) tally.findings.push({ ...finding, seed: options.seed, caseNumber, input: seed.name, how });
      tally.byInput.set(seed.name, (tally.byInput.get(seed.name) ?? 0) + 1);
      tally.cases++;
      options.onCase?.(caseNumber, tally);
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  return tally;
}

export function formatTally(tally: CampaignTally): string {
  const rejected = [...tally.rejected.values()].reduce((a, b) => a + b, 0);
  const crashes = tally.findings.filter((f) => f.kind === 'crash').length;
  const lines = [
    `inputs ${tally.cases}: accepted ${tally.accepted}, rejected ${rejected}, crashes ${crashes}; invalid events or records inside accepted inputs ${tally.eventProblems}; slowest input ${tally.slowestMs.toFixed(0)} ms`,
    'inputs by kind:',
    ...[...tally.byInput].map(([name, n]) => `  ${String(n).padStart(8)}  ${name}`),
    'rejected, by what was wrong:',
    ...[...tally.rejected].sort((a, b) => b[1] - a[1]).map(([kind, n]) => `  ${String(n).padStart(8)}  ${kind}`),
    `findings: ${tally.findings.length}`,
    ...tally.findings.slice(0, 20).map((f) => `  ${f.kind}: seed ${f.seed} case ${f.caseNumber} (${f.input}, ${f.how}): ${f.message}`),
  ];
  return lines.join('\n') + '\n';
}
