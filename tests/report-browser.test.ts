// The HTML report in a real browser: Debian's Chromium (/usr/bin/chromium, installed by .ci/run
// when missing; never a downloaded browser) driven by playwright-core, with the network cut
// off. The reports of a small run and of a compare must show every chart with marks drawn,
// the event display with one outline per jet of the event, and no console error or failed
// request. Screenshots go to build/test-output/report-browser/ (replaced on each run).
// Workers run from dist/ (npm test builds it).

import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { chromium, type BrowserContext } from 'playwright-core';
import { main as runMain } from '../host/cli/commands/run.js';
import { main as clusterMain } from '../host/cli/commands/cluster.js';
import { main as compareMain } from '../host/cli/commands/compare.js';
import { fakeIo } from './support/command-io.js';
import { toyEvents, writeEventFile } from './support/run-files.js';
import { tempDirForSuite } from './support/temp-dir.js';
import { clusterBruteForce } from './support/brute-force.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS } from '../host/types.js';

const CHROMIUM = '/usr/bin/chromium';
const SHOTS = join(import.meta.dirname, '..', 'build', 'test-output', 'report-browser');
const PT_MIN = 15;
const DISPLAYED = 3;

const dir = tempDirForSuite('report-browser');
const events = toyEvents(40, 5, 10);
let context: BrowserContext;
let profile: string;

const COMMANDS = { run: runMain, cluster: clusterMain, compare: compareMain } as const;

async function cli([name, ...argv]: string[]): Promise<number> {
  const fake = fakeIo();
  const code = await COMMANDS[name as keyof typeof COMMANDS](argv, fake.io);
  if (code > 1) throw new Error(`jetlag ${argv.join(' ')}: exit ${code}: ${fake.stderr()}`);
  return code;
}

/** Jets of event `number` above PT_MIN by the brute-force clusterer (spec sections 1-6). */
function jetsAbovePtMin(number: number): number {
  const event = events.find((e) => e.event === number)!;
  const jets = clusterBruteForce(DEFAULT_GRID, Int32Array.from(event.towerIndex ?? []), Float64Array.from(event.towerEt ?? []), { ...DEFAULT_SETTINGS, ptMin: PT_MIN });
  let count = 0;
  for (let k = 0; k < jets.count; k++) if (jets.pt[k] >= PT_MIN) count++;
  return count;
}

interface PageCheck {
  charts: Record<string, number>;
  outlines: number[];
  dataJets: string | null;
  consoleErrors: string[];
  failedRequests: string[];
  outsideRequests: string[];
}

/** Opens a report offline, screenshots it, and counts what it shows. */
async function openReport(file: string, shot: string): Promise<PageCheck> {
  const page = await context.newPage();
  const consoleErrors: string[] = [];
  const failedRequests: string[] = [];
  const outsideRequests: string[] = [];
  page.on('console', (message) => { if (message.type() === 'error') consoleErrors.push(message.text()); });
  page.on('pageerror', (error) => consoleErrors.push(error.message));
  page.on('requestfailed', (request) => failedRequests.push(request.url()));
  page.on('request', (request) => { if (!request.url().startsWith('file:')) outsideRequests.push(request.url()); });
  await page.goto(pathToFileURL(file).href, { waitUntil: 'load' });
  await page.screenshot({ path: join(SHOTS, `${shot}.png`), fullPage: true });
  const charts = await page.$$eval('figure.chart', (figures) => Object.fromEntries(figures.map((figure) => {
    // marks: drawn items inside the chart's mark groups (axes, legends and titles left out)
    const marks = figure.querySelectorAll('svg g.role-mark > *');
    return [figure.getAttribute('data-chart') ?? '?', marks.length];
  })));
  const outlines = await page.$$eval('figure.event-display svg g[class*="jet_outline_"]', (groups) => {
    const perPanel: number[] = [];
    for (const group of groups) {
      const match = /jet_outline_(\d+)_\d+_marks/.exec(group.getAttribute('class') ?? '');
      if (!match || group.children.length === 0) continue;
      const panel = Number(match[1]);
      perPanel[panel] = (perPanel[panel] ?? 0) + 1;
    }
    return Array.from(perPanel, (n) => n ?? 0);
  });
  const dataJets = await page.$eval('figure.event-display', (figure) => figure.getAttribute('data-jets')).catch(() => null);
  await page.close();
  return { charts, outlines, dataJets, consoleErrors, failedRequests, outsideRequests };
}

beforeAll(async () => {
  if (!existsSync(CHROMIUM)) throw new Error(`${CHROMIUM} is missing: install Debian's chromium (apt-get install -y chromium; .ci/run does it)`);
  rmSync(SHOTS, { recursive: true, force: true });
  mkdirSync(SHOTS, { recursive: true });
  writeEventFile(join(dir, 'events.jl'), events);
  profile = mkdtempSync(join(tmpdir(), 'jetlag-chromium-'));
  context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM,
    headless: true,
    offline: true,
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  });
  // the network is blocked: anything but the report file itself is refused
  await context.route('**/*', (route) => (route.request().url().startsWith('file:') ? route.continue() : route.abort()));
});

afterAll(async () => {
  await context?.close();
  if (profile) rmSync(profile, { recursive: true, force: true });
});

describe('the report in a browser, offline', () => {
  it('of a run shows every chart with marks, one outline per jet, and no error', async () => {
    const html = join(dir, 'run.html');
    await cli(['run', join(dir, 'events.jl'), '--workers', '1', '--check', 'none', '-q', '--ptmin', String(PT_MIN), '--report', html, '--display', String(DISPLAYED)]);
    const check = await openReport(html, 'run');
    expect(Object.keys(check.charts).sort()).toEqual(['cumulative', 'event-display', 'scaling', 'service-histogram']);
    for (const [name, marks] of Object.entries(check.charts)) expect(marks, `marks of ${name}`).toBeGreaterThan(0);
    const jets = jetsAbovePtMin(DISPLAYED);
    expect(jets).toBeGreaterThan(0);
    expect(check.outlines).toEqual([jets]);
    expect(check.dataJets).toBe(String(jets));
    expect(check.consoleErrors).toEqual([]);
    expect(check.failedRequests).toEqual([]);
    expect(check.outsideRequests).toEqual([]);
    expect(readFileSync(html, 'utf8')).not.toMatch(/<script|<link|src=|href=/i);
  });

  it('of a compare shows the binned fractions, distributions and turn-on, the reference and candidate side by side', async () => {
    const candidate = join(dir, 'window.jl');
    await cli(['cluster', join(dir, 'events.jl'), '--emulate', 'window', '--ptmin', String(PT_MIN), '--out', candidate]);
    const html = join(dir, 'compare.html');
    await cli(['compare', join(dir, 'events.jl'), candidate, '--ptmin', String(PT_MIN), '--turn-on', '30', '-q', '--report', html, '--display', String(DISPLAYED)]);
    const check = await openReport(html, 'compare');
    expect(Object.keys(check.charts).sort()).toEqual(['compare-by-eta', 'compare-by-pt', 'delta-r', 'event-display', 'response', 'turn-on']);
    for (const [name, marks] of Object.entries(check.charts)) expect(marks, `marks of ${name}`).toBeGreaterThan(0);
    const [reference, candidateJets] = check.dataJets!.split(' ').map(Number);
    expect(reference).toBe(jetsAbovePtMin(DISPLAYED));
    expect(check.outlines).toEqual([reference, candidateJets]);
    expect(check.consoleErrors).toEqual([]);
    expect(check.failedRequests).toEqual([]);
    expect(check.outsideRequests).toEqual([]);
  });
});
