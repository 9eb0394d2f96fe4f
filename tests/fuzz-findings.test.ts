// Inputs the fuzz campaign (npm run fuzz) found mishandled, kept as tests through the built
// command line (dist/: `npm run build:host`): each is refused with exit 2 and one line saying
// why. Invented files.

import { spawnSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { makeSeeds } from '../bench/fuzz/campaign.js';
import { encodeJetsFileHeader } from '../host/formats/jets-codec.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS } from '../host/types.js';
import { tempDirForSuite } from './support/temp-dir.js';

const cli = join(import.meta.dirname, '..', 'dist', 'host', 'cli', 'cli.js');
const directory = tempDirForSuite('fuzz-findings');

function jetlag(...args: string[]) {
  const result = spawnSync(process.execPath, [cli, ...args], { cwd: directory, encoding: 'utf8' });
  return { code: result.status, lines: result.stderr.trimEnd().split('\n') };
}

describe('found by the fuzz campaign', () => {
  it('merge of a summary without its engine name is refused in one line naming the field (seed 17, case 51338)', () => {
    const summary = JSON.parse(Buffer.from(makeSeeds().find((s) => s.name === 'run summary')!.bytes).toString('utf8'));
    delete summary.configuration.engine;
    const path = join(directory, 'no-engine.json');
    writeFileSync(path, JSON.stringify(summary));
    const { code, lines } = jetlag('merge', path, '-q');
    expect(code).toBe(2);
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^jetlag merge: .*configuration\.engine is undefined, expected a string/);
  }, 60_000);

  it('export --quiet of a jets file whose records cannot be decoded says why it exits 2', () => {
    const header = encodeJetsFileHeader(DEFAULT_GRID, { ...DEFAULT_SETTINGS, engine: 'reference' }, { producer: 'test', label: 'invented' });
    // one record: field 1 (event) = 0, then tag 0x07, which names no field
    const path = join(directory, 'broken.jets');
    writeFileSync(path, Buffer.concat([Buffer.from(header), Buffer.from([3, 0x08, 0x00, 0x07])]));
    const { code, lines } = jetlag('export', path, '--format', 'csv', '--out', join(directory, 'broken.csv'), '-q');
    expect(code).toBe(2);
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^jetlag export: read 1 events \(0 invalid, 1 unreadable records\), wrote 0 jets to /);
  }, 60_000);
});
