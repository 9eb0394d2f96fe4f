// Merged open-loop shards: the shards of a job array run side by side, each offered --rate, so
// the merge states one offered figure, their sum, alike in the header, the rate line and the
// JSON, and its sustained rate on the throughput's basis (workers from dist/; invented events
// from the toy generator).

import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main as mergeMain } from '../host/cli/commands/merge.js';
import { main as runMain } from '../host/cli/commands/run.js';
import { mergedSaturation, readSaturation, runSaturation, saturationCause } from '../host/measure/saturation-figures.js';
import type { RunSummary } from '../host/measure/summary.js';
import { fakeIo } from './support/command-io.js';
import { toyEvents, writeEventFile } from './support/run-files.js';
import { tempDirForSuite } from './support/temp-dir.js';

const RATE_HZ = 100;

describe('two open-loop shards merged', () => {
  const dir = tempDirForSuite('merge-open-loop-rates');
  const path = writeEventFile(join(dir, 'toy.events'), toyEvents(32, 5, 5)).path;

  it('state the summed offered rate alike in the header, the rate line and the JSON', async () => {
    const shards: string[] = [];
    for (const shard of ['0/2', '1/2']) {
      const json = join(dir, `shard-${shard[0]}.json`);
      const code = await runMain([path, '--rate', String(RATE_HZ), '--check', 'none', '--workers', '1', '--batch', '4', '--shard', shard, '--json', json, '-q'], fakeIo().io);
      expect(code).toBe(0);
      shards.push(json);
    }
    const mergedJson = join(dir, 'merged.json');
    const fake = fakeIo();
    expect(await mergeMain([...shards, '--json', mergedJson], fake.io)).toBe(0);
    const merged = JSON.parse(readFileSync(mergedJson, 'utf8')) as RunSummary;
    const saturation = merged.saturation!;
    // a fixed schedule offers exactly its rate: each shard 100 Hz, the two 200 Hz
    expect(saturation.offeredHz).toBeCloseTo(2 * RATE_HZ, 6);
    expect(saturation.shards).toBe(2);
    expect(saturation.sustainedHz).toBe(merged.throughput.eventsPerSecond);
    const report = fake.stdout().split('\n');
    expect(report[0]).toContain('open loop fixed 100 Hz per shard, 200 Hz summed over 2 shards');
    const rateLine = report.find((line) => /^ {2}(rate|SATURATED) /.test(line))!;
    expect(rateLine).toContain(`offered 200 Hz summed over 2 shards, sustained ${Math.round(saturation.sustainedHz)} Hz (all shards' events over the longest shard's wall time, as throughput)`);
  });
});

describe('merged rates', () => {
  it('add the offered rates, take the sustained one over the longest wall time and keep each cause a shard found', () => {
    const merged = mergedSaturation([runSaturation(100, 99, false), runSaturation(100, 100, true)], 300, 2);
    expect(merged).toMatchObject({ offeredHz: 200, sustainedHz: 150, shards: 2, saturated: true, rateFellShort: false, backlogGrew: true });
  });

  it('of a version-2 summary judge the shortfall again, and a saturation without one as a growing backlog', () => {
    expect(readSaturation({ offeredHz: 100, sustainedHz: 50, saturated: true })).toMatchObject({ rateFellShort: true, backlogGrew: false, shards: 1 });
    expect(readSaturation({ offeredHz: 100, sustainedHz: 99, saturated: true })).toMatchObject({ rateFellShort: false, backlogGrew: true });
  });
});

describe('the saturation line', () => {
  it('of merged shards says the cause fired in a shard', () => {
    const merged = mergedSaturation([runSaturation(100, 100, false), runSaturation(100, 50, false)], 150, 2)!;
    expect(saturationCause(merged)).toBe('in a shard, the sustained rate fell more than 5 % short of the offered one');
  });

  it('names the cause that fired', () => {
    expect(saturationCause(runSaturation(100, 50, false))).toBe('the sustained rate fell more than 5 % short of the offered one');
    expect(saturationCause(runSaturation(100, 100, true))).toBe('the queue of due events grew through the run');
    expect(saturationCause(runSaturation(100, 50, true))).toBe('the sustained rate fell more than 5 % short of the offered one, and the queue grew through the run');
  });
});
