// The command line as users meet it: real subprocesses of the compiled CLI (npm test builds it).
import { spawnSync } from 'node:child_process';
import { mkdirSync, readdirSync, readFileSync, writeFileSync, existsSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { makeGridTables, selectTowers } from '../host/clustering/grid.js';
import { generateEvents } from '../host/generator/generate.js';
import { clusterReference } from '../host/clustering/reference.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS } from '../host/types.js';
import { tempDirForSuite } from './support/temp-dir.js';
import { CHECK_APART_FROM_TIMING, CHECK_SAMPLE_RULE } from '../host/measure/summary.js';

const cli = join(import.meta.dirname, '..', 'dist', 'host', 'cli', 'cli.js');
const directory = tempDirForSuite('cli');

function jetlag(...args: string[]) {
  const result = spawnSync(process.execPath, [cli, ...args], { cwd: directory, encoding: 'utf8' });
  return { code: result.status, stdout: result.stdout, stderr: result.stderr };
}

describe('every command', () => {
  for (const command of ['demo', 'run', 'cluster', 'compare', 'generate', 'import', 'export', 'merge']) {
    it(`${command} --help prints its usage and exits 0`, () => {
      const result = jetlag(command, '--help');
      expect(result.code).toBe(0);
      expect(result.stdout).toContain(`usage: jetlag ${command}`);
      expect(result.stdout).toContain('exit codes');
    });
  }

  it('an unknown command exits 2 with one line on stderr', () => {
    const result = jetlag('frobnicate');
    expect(result.code).toBe(2);
    expect(result.stderr.trim().split('\n')).toHaveLength(1);
  });

  it('an unknown option exits 2 and names it', () => {
    const result = jetlag('cluster', 'x.jetlag', '--radious', '0.4');
    expect(result.code).toBe(2);
    expect(result.stderr).toContain('--radious');
  });

  it('a missing input file exits 2 with one line naming it', () => {
    const result = jetlag('cluster', 'no-such-file.jetlag');
    expect(result.code).toBe(2);
    expect(result.stderr.trim().split('\n')).toHaveLength(1);
    expect(result.stderr).toContain('no-such-file.jetlag');
  });

  it('a bad option value exits 2 and says what was expected', () => {
    const result = jetlag('generate', '--events', 'many', '--out', 'x.jetlag');
    expect(result.code).toBe(2);
    expect(result.stderr).toContain('--events must be');
  });
});

describe('generate then cluster', () => {
  it('generate is deterministic: the same seed writes the same bytes', () => {
    expect(jetlag('generate', '--events', '20', '--pileup', '50', '--seed', '9', '--out', 'a.jetlag').code).toBe(0);
    expect(jetlag('generate', '--events', '20', '--pileup', '50', '--seed', '9', '--out', 'b.jetlag').code).toBe(0);
    expect(readFileSync(join(directory, 'a.jetlag')).equals(readFileSync(join(directory, 'b.jetlag')))).toBe(true);
    expect(jetlag('generate', '--events', '20', '--pileup', '50', '--seed', '10', '--out', 'c.jetlag').code).toBe(0);
    expect(readFileSync(join(directory, 'a.jetlag')).equals(readFileSync(join(directory, 'c.jetlag')))).toBe(false);
  });

  it('cluster --engine reference --format jsonl writes the reference jets of every generated event', () => {
    expect(jetlag('generate', '--events', '12', '--pileup', '60', '--seed', '3', '--out', 'g.jetlag').code).toBe(0);
    const result = jetlag('cluster', 'g.jetlag', '--engine', 'reference', '--format', 'jsonl', '--out', 'g.jsonl');
    expect(result.code).toBe(0);
    const lines = readFileSync(join(directory, 'g.jsonl'), 'utf8').trim().split('\n').map((l) => JSON.parse(l));
    expect(lines.map((l) => l.event)).toEqual([...Array(12).keys()]);
    const tables = makeGridTables(DEFAULT_GRID);
    for (const event of generateEvents(DEFAULT_GRID, { events: 12, pileup: 60, seed: 3 })) {
      const selected = selectTowers(event.towerIndex, event.towerEt, 0);
      const jets = clusterReference(tables, selected.towerIndex, selected.towerEt, DEFAULT_SETTINGS);
      const line = lines[event.event];
      expect(line.jets).toHaveLength(jets.count);
      for (let k = 0; k < jets.count; k++) {
        // numbers are written in their shortest round-trip form, so they read back exactly
        expect(line.jets[k].pt).toBe(jets.pt[k]);
        expect(line.jets[k].E).toBe(jets.energy[k]);
        expect(line.jets[k].n).toBe(jets.towerCount[k]);
        expect(line.jets[k].towers).toEqual(Array.from(jets.towers.subarray(jets.towerStart[k], jets.towerStart[k] + jets.towerCount[k])));
      }
    }
  });

  it('cluster with the engine and with the reference write byte-identical JSON lines', () => {
    expect(jetlag('generate', '--events', '30', '--pileup', '120', '--seed', '4', '--out', 'h.jetlag').code).toBe(0);
    expect(jetlag('cluster', 'h.jetlag', '--engine', 'reference', '--format', 'jsonl', '--out', 'h-ref.jsonl', '--algorithm', 'kt').code).toBe(0);
    expect(jetlag('cluster', 'h.jetlag', '--engine', 'wasm', '--format', 'jsonl', '--out', 'h-wasm.jsonl', '--algorithm', 'kt').code).toBe(0);
    const reference = readFileSync(join(directory, 'h-ref.jsonl'), 'utf8');
    expect(reference.split('\n').length).toBe(31);
    expect(readFileSync(join(directory, 'h-wasm.jsonl'), 'utf8')).toBe(reference);
  });

  it('cluster of a CSV tower file reports an invalid event with its byte offset and keeps the others', () => {
    const csv = 'event,ieta,iphi,et\n0,10,10,50\n0,10,11,5\n1,12,3,abc\n2,30,30,40\n';
    writeFileSync(join(directory, 'towers.csv'), csv);
    const result = jetlag('cluster', 'towers.csv', '--format', 'jsonl', '--out', 'towers.jsonl');
    expect(result.code).toBe(0);
    expect(result.stderr).toContain(`event 1, byte ${csv.indexOf('1,12,3,abc')}`);
    const lines = readFileSync(join(directory, 'towers.jsonl'), 'utf8').trim().split('\n').map((l) => JSON.parse(l));
    expect(lines.map((l) => l.event)).toEqual([0, 1, 2]);
    expect(lines[1].error).toBeTypeOf('string');
    expect(lines[0].jets[0].n).toBe(2);
    expect(lines[2].jets[0].pt).toBe(40);
  });

  it('a truncated event file keeps the events before the break and exits 2 naming the byte offset', () => {
    expect(jetlag('generate', '--events', '5', '--pileup', '20', '--seed', '6', '--out', 't.jetlag').code).toBe(0);
    const bytes = readFileSync(join(directory, 't.jetlag'));
    writeFileSync(join(directory, 'cut.jetlag'), bytes.subarray(0, bytes.length - 10));
    const result = jetlag('cluster', 'cut.jetlag', '--format', 'jsonl', '--out', 'cut.jsonl');
    expect(result.code).toBe(2);
    expect(result.stderr).toMatch(/cut\.jetlag.*byte \d+/);
    const lines = readFileSync(join(directory, 'cut.jsonl'), 'utf8').trim().split('\n');
    expect(lines).toHaveLength(4);
  });

  it('writes output under a temporary name: no output file appears when the input cannot be opened', () => {
    writeFileSync(join(directory, 'garbage.jetlag'), Buffer.from([0x0a, 0x06, 0x6a, 0x65, 0x74, 0x6c, 0x61, 0x68, 0xff]));
    const result = jetlag('cluster', 'garbage.jetlag', '--out', 'never.jets');
    expect(result.code).toBe(2);
    expect(existsSync(join(directory, 'never.jets'))).toBe(false);
  });
});

describe('run outputs', () => {
  beforeAll(() => {
    expect(jetlag('generate', '--events', '6', '--pileup', '30', '--seed', '12', '--out', 'r.jetlag', '--force').code).toBe(0);
  });

  it('--out - writes the jets file to stdout and the report to stderr', () => {
    const result = spawnSync(process.execPath, [cli, 'run', 'r.jetlag', '--out', '-', '--quiet', '--workers', '1'], { cwd: directory });
    expect(result.status).toBe(0);
    const stdout = result.stdout as Buffer;
    // a jets file starts with its header record: length varint, then the signature field "jetlag"
    const signatureAt = stdout.indexOf(Buffer.from([0x0a, 0x06, ...Buffer.from('jetlag')]));
    expect(signatureAt === 1 || signatureAt === 2).toBe(true);
    expect(result.stderr.toString()).toContain('read 6 · ok 6');
    expect(existsSync(join(directory, '-'))).toBe(false);
  });

  it('an --out that cannot be written is refused before the run, leaving no temporary file', () => {
    mkdirSync(join(directory, 'a-directory'), { recursive: true });
    const before = readdirSync(directory).length;
    const result = jetlag('run', 'r.jetlag', '--out', 'a-directory', '--quiet');
    expect(result.code).toBe(2);
    expect(result.stderr.trim().split('\n')).toHaveLength(1);
    expect(result.stderr).toContain('a-directory');
    expect(readdirSync(directory).length).toBe(before);
  });

  it('--engine wasm never falls back to the reference: the report names the engine that ran', () => {
    const result = jetlag('run', 'r.jetlag', '--quiet', '--workers', '1');
    expect(result.code).toBe(0);
    expect(result.stdout).toMatch(/· engine wasm ·/);
    expect(result.stdout).not.toMatch(/engine reference/);
  });

  it('says in the summary that the check ran after the timed pass and by which sample rule', () => {
    const result = jetlag('run', 'r.jetlag', '--quiet', '--workers', '1', '--check', 'all', '--json', 'r-check.json');
    expect(result.code).toBe(0);
    const summary = JSON.parse(readFileSync(join(directory, 'r-check.json'), 'utf8'));
    expect(summary.check.checked).toBe(summary.events.ok);
    expect(summary.check.timing).toBe(CHECK_APART_FROM_TIMING);
    expect(summary.check.sample).toBe(CHECK_SAMPLE_RULE);
    expect(result.stdout).toContain(`checked ${CHECK_APART_FROM_TIMING}`);
  });
});

describe('merge of shard summaries', () => {
  function shard(file: string, k: number, n: number) {
    const result = jetlag('run', file, '--shard', `${k}/${n}`, '--batch', '4', '--check', 'none', '--quiet', '--workers', '1', '--json', `${file}-${k}.json`, '--force');
    expect(result.code).toBe(0);
    return `${file}-${k}.json`;
  }

  beforeAll(() => {
    expect(jetlag('generate', '--events', '25', '--pileup', '20', '--seed', '21', '--out', 'm.jetlag', '--force').code).toBe(0);
  });

  it('adds every shard into a complete summary whose counts are those of the whole file', () => {
    const parts = [shard('m.jetlag', 0, 2), shard('m.jetlag', 1, 2)];
    const result = jetlag('merge', ...parts, '--json', 'm-all.json', '--quiet', '--force');
    expect(result.code).toBe(0);
    const merged = JSON.parse(readFileSync(join(directory, 'm-all.json'), 'utf8'));
    expect(merged.partial).toBe(false);
    expect(merged.events.read).toBe(25);
  });

  it('marks the summary partial and exits 1 when a shard is missing', () => {
    const result = jetlag('merge', shard('m.jetlag', 0, 2), '--json', 'm-half.json', '--quiet', '--force');
    expect(result.code).toBe(1);
    const merged = JSON.parse(readFileSync(join(directory, 'm-half.json'), 'utf8'));
    expect(merged.partial).toBe(true);
    expect(merged.partialReason).toContain('shards 1 of 2');
  });

  it('refuses shards of two different inputs', () => {
    expect(jetlag('generate', '--events', '9', '--pileup', '20', '--seed', '22', '--out', 'other.jetlag', '--force').code).toBe(0);
    const result = jetlag('merge', shard('m.jetlag', 0, 2), shard('other.jetlag', 1, 2), '--quiet');
    expect(result.code).toBe(2);
    expect(result.stderr).toContain('configuration differs');
  });

  it('names a JSON file that is not a run summary', () => {
    writeFileSync(join(directory, 'foreign.json'), '{}');
    const result = jetlag('merge', 'foreign.json');
    expect(result.code).toBe(2);
    expect(result.stderr.trim()).toBe('jetlag merge: foreign.json: not a jetlag run summary (format undefined)');
  });
});
