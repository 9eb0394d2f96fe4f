// The report's latency table shows the pileup chain's stages and grooming, parts of the cluster
// stage, when they ran, and its settings table names the steps. Workers run from dist/.

import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main as generateMain } from '../host/cli/commands/generate.js';
import { main as runMain } from '../host/cli/commands/run.js';
import { buildReport } from '../host/report/build-report.js';
import { runView } from '../host/report/report-data.js';
import { fakeIo } from './support/command-io.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('report-chain-stages');

/** the latency table's rows as [label, events] */
function latencyRows(html: string): [string, string][] {
  const table = html.match(/<table class="latency">.*?<\/table>/s)![0];
  return [...table.matchAll(/<tr><th scope="row">([^<]*)<\/th><td>([^<]*)<\/td>/g)].map((m) => [m[1], m[2]]);
}

function settingsRow(html: string, label: string): string | undefined {
  const table = html.match(/<table class="settings">.*?<\/table>/s)![0];
  return table.match(new RegExp(`<th scope="row">${label}</th><td>([^<]*)</td>`))?.[1];
}

describe('the report of a run with pileup steps and grooming', () => {
  it('lists each chain stage and grooming under the cluster stage, with every event', async () => {
    const events = join(dir, 'events.pb');
    const html = join(dir, 'chain.html');
    expect(await generateMain(['--events', '6', '--pileup', '30', '--seed', '41', '--out', events, '-q'], fakeIo().io)).toBe(0);
    expect(await runMain([events, '--workers', '1', '--check', 'none', '--radius', '1.0', '--ptmin', '20', '--areas', '--rho', 'kt:0.4', '--subtract',
      '--softkiller', '5:5', '--trim', '0.2:0.05', '--softdrop', '0.1:0', '-q', '--report', html], fakeIo().io)).toBe(0);
    const page = readFileSync(html, 'utf8');
    const rows = latencyRows(page);
    const labels = rows.map(([label]) => label);
    const cluster = labels.indexOf('stage cluster');
    expect(cluster).toBeGreaterThanOrEqual(0);
    // rho from patches did not run (--rho kt): no row for it
    expect(labels.slice(cluster + 1, cluster + 6)).toEqual([
      'stage cluster › SoftKiller',
      'stage cluster › ghosts, clustering',
      'stage cluster › ρ from kt jets',
      'stage cluster › areas, subtraction',
      'stage cluster › grooming (trimming, soft drop)',
    ]);
    for (const [label, count] of rows.slice(cluster, cluster + 6)) expect([label, count]).toEqual([label, '6']);
    expect(settingsRow(page, 'pileup steps')).toBe('areas, ρ kt:0.4, subtraction, SoftKiller 5:5');
    expect(settingsRow(page, 'grooming')).toBe('trim:0.2:0.05 softdrop:0.1:0');
  }, 120_000);

  it('shows no chain or grooming row for a plain run', async () => {
    const events = join(dir, 'plain.pb');
    const json = join(dir, 'plain.json');
    expect(await generateMain(['--events', '3', '--seed', '42', '--out', events, '-q'], fakeIo().io)).toBe(0);
    expect(await runMain([events, '--workers', '1', '--check', 'none', '-q', '--json', json], fakeIo().io)).toBe(0);
    const page = await buildReport({ inputs: [runView(JSON.parse(readFileSync(json, 'utf8')), json)] });
    expect(latencyRows(page).filter(([label]) => label.startsWith('stage cluster ›'))).toEqual([]);
    expect([settingsRow(page, 'pileup steps'), settingsRow(page, 'grooming')]).toEqual(['none', 'none']);
  }, 60_000);
});
