// The README's job array on a real batch system: a one-node Slurm cluster on this machine runs
// `jetlag run --shard k/n` as an array over an indexed file, `jetlag merge` adds the shard summaries, and the merged
// counts and tower percentiles equal those of one run over the whole file. Where the daemons
// cannot start, the test is skipped with their own error, never passed.

import { afterAll, describe, expect, it } from 'vitest';
import hdr from 'hdr-histogram-js';
import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { installSlurm, OneNodeCluster, readmeJobArray } from '../support/slurm-cluster.js';
import { tempDirForSuite } from '../support/temp-dir.js';

const checkout = resolve(import.meta.dirname, '../..');
const entryPoint = join(checkout, 'dist/host/cli/cli.js');
const SHARDS = 4;

describe('the README job array on a one-node Slurm cluster', () => {
  const dir = tempDirForSuite('farm');
  const work = join(dir, 'work');
  const bin = join(dir, 'bin');
  mkdirSync(work);
  mkdirSync(bin);
  // `jetlag` on the PATH, as `npm install -g .` would put it, without touching the system's npm
  writeFileSync(join(bin, 'jetlag'), `#!/bin/sh\nexec node ${entryPoint} "$@"\n`, { mode: 0o755 });
  const env = { ...process.env, PATH: `${bin}:${process.env.PATH}` };
  const cluster = new OneNodeCluster(join(dir, 'slurm'));
  afterAll(() => cluster.stop());

  const shell = (command: string) => spawnSync('bash', ['-c', command], { cwd: work, env, encoding: 'utf8', timeout: 300_000 });

  it('merges the shards of an array into one run\'s counts', async (context) => {
    const installError = installSlurm();
    if (installError !== null) {
      console.error(`farm test skipped: ${installError}`);
      context.skip(installError);
    }
    try {
      await cluster.start();
    } catch (error) {
      const message = (error as Error).message;
      console.error(`farm test skipped: the batch system did not start: ${message}`);
      await cluster.stop();
      context.skip(message);
    }

    const events = join(dir, 'farm.jetlag');
    const generated = shell(`jetlag generate --events 300 --pileup 30 --seed 17 --out ${events} -q && jetlag index ${events} -q`);
    expect(generated.stderr).toBe('');
    expect(generated.status).toBe(0);

    const recipe = readmeJobArray(readFileSync(join(checkout, 'README.md'), 'utf8'));
    const substitutions: [string, string][] = [['/data/run-42.jetlag', events], ['--array=0-15', `--array=0-${SHARDS - 1}`], ['}/16 ', `}/${SHARDS} `]];
    let script = recipe.script;
    for (const [from, to] of substitutions) {
      expect(script, `README job array holds ${from}`).toContain(from);
      script = script.replaceAll(from, to);
    }
    const jobId = cluster.submit(script, work, env);
    await cluster.waitFor(jobId, 300_000);

    const logs = readdirSync(work).filter((name) => name.startsWith('slurm-')).map((name) => readFileSync(join(work, name), 'utf8')).join('');
    const shardFiles = readdirSync(work).filter((name) => /^shard-\d+\.json$/.test(name)).sort();
    expect(shardFiles, `shard summaries (task output: ${logs})`).toEqual(Array.from({ length: SHARDS }, (_, k) => `shard-${k}.json`));

    // a plain, indexed file: no shard has a problem or a note to report
    expect(logs, 'task output').not.toContain('jetlag run:');
    const merged = shell(recipe.merge);
    expect(merged.status, merged.stderr).toBe(0);
    const single = shell(`jetlag run ${events} --json single.json --quiet`);
    expect(single.status, single.stderr).toBe(0);

    const mergedSummary = JSON.parse(readFileSync(join(work, 'run-42-summary.json'), 'utf8'));
    const singleSummary = JSON.parse(readFileSync(join(work, 'single.json'), 'utf8'));
    expect(mergedSummary.partial).toBe(false);
    expect(mergedSummary.shards).toEqual(Array.from({ length: SHARDS }, (_, index) => ({ index, count: SHARDS })));
    expect(mergedSummary.events).toEqual(singleSummary.events);
    expect(mergedSummary.events.read).toBe(300);
    expect(mergedSummary.jets).toBe(singleSummary.jets);
    expect(mergedSummary.towers).toEqual(singleSummary.towers);
    expect(mergedSummary.check).toEqual(singleSummary.check);
    // towers per event are the events' own, so their percentiles are the same however the file was split
    expect(mergedSummary.towersPerEvent).toEqual(singleSummary.towersPerEvent);
    expect(mergedSummary.plainHistograms.towersPerEvent).toEqual(singleSummary.plainHistograms.towersPerEvent);
    // latencies differ from run to run: the single run's hold as many events, and the merged
    // percentiles are those of the shards' histograms added bucket by bucket (here by the HDR
    // library directly, not through jetlag's merge)
    expect(mergedSummary.latency.service.count).toBe(singleSummary.latency.service.count);
    expect(mergedSummary.latency.service.count).toBe(300);
    const added = hdr.build({ bitBucketSize: 64, autoResize: true, lowestDiscernibleValue: 1, highestTrackableValue: 3600e9, numberOfSignificantValueDigits: 3 });
    let maxNs = 0;
    for (const name of shardFiles) {
      const encoded = JSON.parse(readFileSync(join(work, name), 'utf8')).histograms.service;
      added.add(hdr.decodeFromCompressedBase64(encoded.hdr, 64, false));
      maxNs = Math.max(maxNs, encoded.maxNs);
    }
    for (const [percentile, field] of [[50, 'p50_us'], [90, 'p90_us'], [99, 'p99_us'], [99.9, 'p999_us']] as const) {
      expect(mergedSummary.latency.service[field], field).toBe(Math.min(added.getValueAtPercentile(percentile), maxNs) / 1000);
    }
  });
});
