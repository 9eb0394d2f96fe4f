// The built command line (dist/: `npm run build:host`) on outputs that exist, CSV from another
// grid, cut CSV numbering and broken summaries: every error is one line that starts with
// `jetlag COMMAND:`, names the file, and prints nothing raw. Invented events.

import { spawnSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { describe, expect, it, vi } from 'vitest';
import { tempDirForSuite } from './support/temp-dir.js';

const cli = join(import.meta.dirname, '..', 'dist', 'host', 'cli', 'cli.js');
const directory = tempDirForSuite('cli-robust');
// several process starts per test on a shared machine
vi.setConfig({ testTimeout: 60_000 });

function jetlag(...args: string[]) {
  const result = spawnSync(process.execPath, [cli, ...args], { cwd: directory, encoding: 'utf8' });
  return { code: result.status, stdout: result.stdout, stderr: result.stderr };
}

/** the error lines: one, led by the command's name */
function oneLine(stderr: string, command: string): string {
  const lines = stderr.trimEnd().split('\n');
  expect(lines).toHaveLength(1);
  expect(lines[0].startsWith(`jetlag ${command}: `)).toBe(true);
  return lines[0];
}

describe('an output file that exists', () => {
  it('is refused without --force, left as it was, and replaced with it', () => {
    writeFileSync(join(directory, 'taken.jetlag'), 'keep me\n');
    const refused = jetlag('generate', '--events', '3', '--pileup', '5', '--out', 'taken.jetlag');
    expect(refused.code).toBe(2);
    expect(oneLine(refused.stderr, 'generate')).toBe('jetlag generate: cannot write taken.jetlag: the file exists (give --force to replace it)');
    expect(readFileSync(join(directory, 'taken.jetlag'), 'utf8')).toBe('keep me\n');
    const forced = jetlag('generate', '--events', '3', '--pileup', '5', '--out', 'taken.jetlag', '--force', '-q');
    expect(forced).toMatchObject({ code: 0, stderr: '' });
    expect(readFileSync(join(directory, 'taken.jetlag')).subarray(0, 16).includes('jetlag')).toBe(true);
  });
});

describe('CSV from a grid other than the default', () => {
  it('is exported with its grid stated, and imported back on that grid without grid options', () => {
    expect(jetlag('generate', '--events', '4', '--pileup', '10', '--eta-bins', '30', '--phi-bins', '20', '--eta-max', '1.5', '--out', 'small.jetlag', '-q').code).toBe(0);
    expect(jetlag('export', 'small.jetlag', '--out', 'small.csv', '-q').code).toBe(0);
    const csv = readFileSync(join(directory, 'small.csv'), 'utf8');
    expect(csv.split('\n').slice(0, 2)).toEqual(['# grid etaMin=-2.5 etaMax=1.5 etaBins=30 phiBins=20', 'event,ieta,iphi,et']);
    expect(jetlag('import', '--csv', 'small.csv', '--out', 'again.jetlag', '-q').code).toBe(0);
    const back = jetlag('export', 'again.jetlag', '--format', 'csv', '-q');
    expect(back.stdout).toBe(csv);
  });

  it('without a statement, says once which grid it assumed', () => {
    writeFileSync(join(directory, 'wide.csv'), 'event,ieta,iphi,et\n0,70,3,1\n1,71,3,1\n');
    const result = jetlag('cluster', 'wide.csv', '--format', 'jsonl', '--out', '-');
    const explained = result.stderr.split('\n').filter((line) => line.includes('the grid assumed'));
    expect(explained).toEqual([expect.stringMatching(/^jetlag cluster: wide\.csv, event 0, byte 19: tower \(ieta 70, iphi 3\) is outside the grid of 50 x 64 towers \(the grid assumed: eta \[-2\.5, 2\.5\) in 50 bins, phi in 64 bins, the default grid; .* \(line 2\)$/)]);
  });
});

describe('CSV event numbers that jump', () => {
  it('stop the file at --max-event-gap, naming line and byte', () => {
    writeFileSync(join(directory, 'jump.csv'), 'event,ieta,iphi,et\n0,1,1,1\n1153088788,1,1,1\n');
    const result = jetlag('import', '--csv', 'jump.csv', '--out', 'jump.jetlag', '--max-event-gap', '1000');
    expect(result.code).toBe(2);
    expect(oneLine(result.stderr, 'import')).toBe('jetlag import: jump.csv, line 3, byte 27: event number 1153088788 after 0 jumps more than 1000 numbers (--max-event-gap; the rest of the file is unreadable); 1 event before it written to jump.jetlag');
  });
});

describe('merge of files that are not summaries', () => {
  it('names binary data without printing it', () => {
    writeFileSync(join(directory, 'packed.json'), gzipSync(Buffer.from('{"format":"x"}')));
    const result = jetlag('merge', 'packed.json');
    expect(result.code).toBe(2);
    expect(oneLine(result.stderr, 'merge')).toBe('jetlag merge: packed.json, byte 0: not a JSON summary: gzip data');
  });

  it('names a missing file without the system\'s raw error', () => {
    const result = jetlag('merge', 'nowhere.json');
    expect(result.code).toBe(2);
    expect(oneLine(result.stderr, 'merge')).toBe('jetlag merge: nowhere.json: cannot open: no such file');
  });

  it('names where text that is not JSON goes wrong', () => {
    writeFileSync(join(directory, 'cut.json'), '{"format": "jetlag-run-summary", ');
    const result = jetlag('merge', 'cut.json');
    expect(oneLine(result.stderr, 'merge')).toMatch(/^jetlag merge: cut\.json(, byte \d+)?: not a JSON summary: /);
  });
});

describe('-q', () => {
  it('is taken by compare, which then prints only its verdict', () => {
    expect(jetlag('generate', '--events', '5', '--pileup', '10', '--out', 'q.jetlag', '-q').code).toBe(0);
    expect(jetlag('cluster', 'q.jetlag', '--engine', 'reference', '--format', 'jsonl', '--out', 'q.jsonl', '-q').code).toBe(0);
    const result = jetlag('compare', 'q.jetlag', 'q.jsonl', '-q');
    expect(result.code).toBe(0);
    expect(result.stdout).toMatch(/^PASS: agreeing fraction 1 >= --require 0\.999\n$/);
  });
});
