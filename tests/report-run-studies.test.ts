// The run section's charts that need more than a closed-loop run: the open-loop breakdown
// (--rate), throughput against workers (--scan-workers) and p99 against offered rate
// (--find-rate), each drawn with marks from `jetlag run … --report`. Workers run from dist/.

import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { main as runMain } from '../host/cli/commands/run.js';
import { fakeIo } from './support/command-io.js';
import { toyEvents, writeEventFile } from './support/run-files.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('report-run-studies');
const events = join(dir, 'events.jl');

/** the drawn items (points, lines, rules) of one chart of the page */
function marksOf(page: string, chart: string): number {
  const figure = page.match(new RegExp(`<figure class="chart" data-chart="${chart}".*?</figure>`, 's'));
  expect(figure, `chart ${chart}`).not.toBeNull();
  return figure![0].split('role="graphics-symbol"').length - 1;
}

beforeAll(() => {
  writeEventFile(events, toyEvents(40, 17, 5));
});

describe('the report of a run with studies', () => {
  it('draws the open-loop breakdown of wait, service and return', async () => {
    const html = join(dir, 'open-loop.html');
    expect(await runMain([events, '--rate', '400', '--workers', '1', '--check', 'none', '-q', '--report', html], fakeIo().io)).toBe(0);
    const page = readFileSync(html, 'utf8');
    // wait, service, return and end-to-end, each with p50 and mean at least
    expect(marksOf(page, 'open-loop')).toBeGreaterThanOrEqual(8);
    expect(page).toMatch(/<tr><th scope="row">wait \(open loop\)<\/th><td>40<\/td>/);
  }, 60_000);

  it('draws throughput against workers and p99 against offered rate', async () => {
    const html = join(dir, 'studies.html');
    const code = await runMain([events, '--workers', '1', '--batch', '4', '--check', 'none', '-q', '--scan-workers', '--find-rate', '--budget-us', '1000000', '--report', html], fakeIo().io);
    expect(code).toBe(0);
    const page = readFileSync(html, 'utf8');
    expect(marksOf(page, 'workers')).toBeGreaterThan(0);
    expect(marksOf(page, 'find-rate')).toBeGreaterThan(0);
  }, 180_000);
});
