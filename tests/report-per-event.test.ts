// jetlag run --per-event: one CSV row per clustered event, read back by jetlag report --per-event
// for the scatter of service time against towers. Workers run from dist/.

import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main as runMain } from '../host/cli/commands/run.js';
import { main as reportMain } from '../host/cli/commands/report.js';
import { fakeIo } from './support/command-io.js';
import { toyEvents, writeEventFile } from './support/run-files.js';
import { tempDirForTest } from './support/temp-dir.js';

describe('per-event times', () => {
  it('are one CSV row per clustered event, and make the report\'s scatter points', async () => {
    const dir = tempDirForTest('per-event');
    const events = toyEvents(25, 4, 10);
    writeEventFile(join(dir, 'events.jl'), events);
    const csv = join(dir, 'times.csv');
    expect(await runMain([join(dir, 'events.jl'), '--workers', '1', '--check', 'none', '-q', '--per-event', csv, '--json', join(dir, 'run.json')], fakeIo().io)).toBe(0);
    const lines = readFileSync(csv, 'utf8').trim().split('\n');
    expect(lines[0]).toBe('event,towers,service_ns');
    const rows = lines.slice(1).map((line) => line.split(',').map(Number));
    expect(rows.map((row) => row[0])).toEqual(events.map((event) => event.event));
    for (const [, towers, serviceNs] of rows) {
      expect(towers).toBeGreaterThan(0);
      expect(serviceNs).toBeGreaterThan(0);
    }
    const html = join(dir, 'report.html');
    const io = fakeIo();
    expect(await reportMain([join(dir, 'run.json'), '--per-event', csv, '--out', html], io.io)).toBe(0);
    const page = readFileSync(html, 'utf8');
    expect(page).toContain('Small dots: single events (thinned)');
    // the slowest event of the CSV is the one displayed
    const slowest = rows.reduce((a, b) => (b[2] > a[2] ? b : a))[0];
    expect(page).toContain(`Event ${slowest} (the slowest of the run)`);
  });
});
