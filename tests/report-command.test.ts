// jetlag report SUMMARY.json… --out: several runs side by side, a merged shard summary, a
// compare document, and a file that is none of these. Workers run from dist/.

import { spawnSync } from 'node:child_process';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { toyEvents, writeEventFile } from './support/run-files.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('report-command');
const EVENTS = 30;
const events = join(dir, 'events.jl');

const cli = join(import.meta.dirname, '..', 'dist', 'host', 'cli', 'cli.js');

/** the compiled command line, as a user runs it (exit code and stderr included) */
function jetlag(...argv: string[]): { code: number; stderr: string } {
  const result = spawnSync(process.execPath, [cli, ...argv], { encoding: 'utf8' });
  return { code: result.status ?? -1, stderr: result.stderr };
}

/** the cells of a table row, by its label */
function rowCells(html: string, tableClass: string, label: string): string[] {
  const table = html.match(new RegExp(`<table class="${tableClass}">.*?</table>`, 's'))![0];
  const row = table.match(new RegExp(`<tr><th scope="row">${label}</th>(.*?)</tr>`, 's'));
  return row ? [...row[1].matchAll(/<td>([^<]*)<\/td>/g)].map((m) => m[1]) : [];
}

beforeAll(() => {
  writeEventFile(events, toyEvents(EVENTS, 12, 10));
});

describe('jetlag report', () => {
  it('shows several runs side by side: a column per run in the tables, a series per run in the charts', () => {
    const reference = join(dir, 'reference.json');
    const wasm = join(dir, 'wasm.json');
    expect((jetlag('run', events, '--engine', 'reference', '--workers', '1', '--check', 'none', '-q', '--json', reference)).code).toBe(0);
    expect((jetlag('run', events, '--engine', 'wasm', '--workers', '1', '--check', 'none', '-q', '--json', wasm)).code).toBe(0);
    const html = join(dir, 'side-by-side.html');
    expect((jetlag('report', reference, wasm, '--out', html)).code).toBe(0);
    const page = readFileSync(html, 'utf8');
    expect(page).toContain('<h2>2 runs side by side</h2>');
    const settingsHead = page.match(/<table class="settings"><thead><tr>(.*?)<\/tr>/s)![1];
    expect([...settingsHead.matchAll(/<th scope="col">([^<]*)<\/th>/g)].map((m) => m[1])).toEqual(['setting', 'reference, 1 worker, events.jl', 'wasm, 1 worker, events.jl']);
    expect(rowCells(page, 'settings', 'engine')).toEqual(['reference', 'wasm']);
    expect(rowCells(page, 'counts', 'events read')).toEqual([String(EVENTS), String(EVENTS)]);
    // the service histogram's legend names both runs
    const histogram = page.match(/<figure class="chart" data-chart="service-histogram".*?<\/figure>/s)![0];
    expect(histogram).toContain('reference, 1 worker, events.jl');
    expect(histogram).toContain('wasm, 1 worker, events.jl');
  }, 60_000);

  it('reads a merged shard summary, its counts those of the whole file', () => {
    const shards = [0, 1].map((k) => join(dir, `shard-${k}.json`));
    for (const [k, path] of shards.entries()) {
      expect((jetlag('run', events, '--shard', `${k}/2`, '--batch', '4', '--workers', '1', '--check', 'none', '-q', '--json', path)).code).toBe(0);
    }
    const merged = join(dir, 'merged.json');
    expect((jetlag('merge', ...shards, '-q', '--json', merged)).code).toBe(0);
    const html = join(dir, 'merged.html');
    expect((jetlag('report', merged, '--out', html)).code).toBe(0);
    const page = readFileSync(html, 'utf8');
    expect(rowCells(page, 'counts', 'events read')).toEqual([String(EVENTS)]);
    expect(rowCells(page, 'settings', 'shards')).toEqual(['0/2, 1/2']);
    expect(page).toContain('data-chart="service-histogram"');
  }, 60_000);

  it('builds a compare section from a compare document', () => {
    const candidate = join(dir, 'window.jl');
    const json = join(dir, 'compare.json');
    expect((jetlag('cluster', events, '--emulate', 'window', '--ptmin', '10', '--out', candidate, '-q')).code).toBe(0);
    expect((jetlag('compare', events, candidate, '--ptmin', '10', '-q', '--json', json)).code).toBeLessThan(2);
    const html = join(dir, 'compare.html');
    expect((jetlag('report', json, '--out', html)).code).toBe(0);
    const page = readFileSync(html, 'utf8');
    for (const chart of ['compare-by-pt', 'compare-by-eta', 'response', 'delta-r']) expect(page).toContain(`data-chart="${chart}"`);
  }, 60_000);

  it('names a JSON file that is neither a run summary nor a compare report, exit 2, no report written', () => {
    const foreign = join(dir, 'foreign.json');
    writeFileSync(foreign, '{"hello":1}');
    const html = join(dir, 'never.html');
    const result = jetlag('report', foreign, '--out', html);
    expect(result.code).toBe(2);
    expect(result.stderr.trim()).toBe(`jetlag report: ${foreign}: neither a run summary (jetlag run --json) nor a compare report (jetlag compare --json)`);
    expect(existsSync(html)).toBe(false);
  });
});
