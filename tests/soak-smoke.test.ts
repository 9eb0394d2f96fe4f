// A short soak (dist/bench/soak.js, `npm run build:host` first): a few seconds of a generated
// stream at a low open-loop rate through the real run, and its JSON result. The long run and its
// verdicts are `npm run soak`'s; here only that its accounting adds up and its result is whole.

import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it, vi } from 'vitest';
import { tempDirForSuite } from './support/temp-dir.js';

const soak = join(__dirname, '..', 'dist', 'bench', 'soak.js');
// a run of about 8 s plus the process start, on a shared machine
vi.setConfig({ testTimeout: 60_000, hookTimeout: 60_000 });

const RATE_HZ = 40;
const MINUTES = 0.125;
/** rate x duration: what the soak is asked to offer */
const EVENTS = 300;

describe('a short soak', () => {
  const dir = tempDirForSuite('soak');
  const json = join(dir, 'soak.json');
  let status: number | null = null;
  let stdout = '';
  let result: any = null;
  const run = () => {
    if (result) return;
    const child = spawnSync(process.execPath, [soak, '--minutes', String(MINUTES), '--rate', String(RATE_HZ), '--pileup', '30', '--distinct', '20', '--sample-seconds', '0.5', '--json', json], { encoding: 'utf8' });
    status = child.status;
    stdout = child.stdout;
    result = JSON.parse(readFileSync(json, 'utf8'));
  };

  it('offers rate x minutes events and accounts for every one: none lost', () => {
    run();
    expect([0, 1]).toContain(status);
    const events = result.events;
    expect(events.offered).toBe(EVENTS);
    expect(events.read).toBe(EVENTS);
    expect(events.ok + events.invalid + events.failed).toBe(EVENTS);
    expect(events.lost).toBe(0);
    expect(events.observed).toBe(events.ok);
    expect(stdout).toContain(`offered ${EVENTS}, read ${EVENTS}`);
  });

  it('puts a tenth of the events, by event number, in its first and its last tenth', () => {
    run();
    for (const tenth of [result.latency.firstTenth, result.latency.lastTenth]) {
      expect(tenth.service.count).toBe(EVENTS / 10);
      expect(tenth.endToEnd.count).toBe(EVENTS / 10);
      // end-to-end holds the service time (wait + service + return)
      expect(tenth.endToEnd.p50_us).toBeGreaterThanOrEqual(tenth.service.p50_us * 0.999);
    }
    expect(result.latency.serviceDrift.tenthsUs).toHaveLength(10);
  });

  it('writes the bytes streamed, the memory series with its verdict, and the load average', () => {
    run();
    // each pileup-30 record holds hundreds of towers of at least a few bytes each
    expect(result.bytesStreamed).toBeGreaterThan(EVENTS * 500);
    expect(result.memory.samples.length).toBeGreaterThanOrEqual(10);
    expect(result.memory.samples[0]).toHaveProperty('rssMiB');
    expect(typeof result.memory.flat).toBe('boolean');
    expect(result.loadAverage.start).toBeGreaterThanOrEqual(0);
    expect(result.verdict.pass).toBe(result.memory.flat && result.events.lost === 0);
    expect(status).toBe(result.verdict.pass ? 0 : 1);
  });
});
