// jetlag run as a subprocess (compiled CLI from dist/: `npm run build:host`), stopped by SIGINT.
import { describe, expect, it } from 'vitest';
import { spawn } from 'node:child_process';
import { readFileSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { toyEvents, writeEventFile } from './support/run-files.js';
import { tempDirForTest } from './support/temp-dir.js';

const cli = join(__dirname, '..', 'dist', 'host', 'cli', 'cli.js');

/** Resolves once the jets file's temporary in `dir` has had two different non-zero sizes (or the child is gone). */
async function eventsFlowing(dir: string, gone: () => boolean): Promise<void> {
  let firstSize = 0;
  for (let waitedMs = 0; waitedMs < 60_000 && !gone(); waitedMs += 25) {
    const temporary = readdirSync(dir).find((name) => name.startsWith('.toy.jets.') && name.endsWith('.tmp'));
    const size = temporary ? statSafe(join(dir, temporary)) : 0;
    if (size > 0 && firstSize === 0) firstSize = size;
    else if (size > firstSize && firstSize > 0) return;
    await new Promise((resolve) => setTimeout(resolve, 25));
  }
}

function statSafe(path: string): number {
  try {
    return statSync(path).size;
  } catch {
    return 0; // renamed or removed between the listing and the look
  }
}

describe('jetlag run interrupted by SIGINT', () => {
  it('stops reading, drains the batches in flight and writes a summary marked partial whose counts add up', async () => {
    const dir = tempDirForTest('sigint');
    const file = writeEventFile(join(dir, 'toy.events'), toyEvents(150, 23, 5));
    const summaryPath = join(dir, 'summary.json');
    // 150 events due at 20 Hz take 7.5 s; the interrupt comes once the jets file (written under
    // a temporary name while the run goes) has grown past its first write: events are flowing
    const jetsPath = join(dir, 'toy.jets');
    const child = spawn(process.execPath, [cli, 'run', file.path, '--rate', '20', '--batch', '4', '--json', summaryPath, '--out', jetsPath, '--quiet', '--check', 'none'], { stdio: ['ignore', 'pipe', 'pipe'] });
    let stderr = '';
    child.stderr.on('data', (chunk) => { stderr += chunk; });
    let exitCode: number | null | undefined;
    const exited = new Promise<number | null>((resolve) => child.on('exit', (code) => { exitCode = code; resolve(code); }));
    await eventsFlowing(dir, () => exitCode !== undefined);
    child.kill('SIGINT');
    const code = await exited;
    expect({ code, stderr }).toMatchObject({ code: 130 });
    expect(stderr).toContain('interrupted');
    const summary = JSON.parse(readFileSync(summaryPath, 'utf8'));
    expect(summary.partial).toBe(true);
    expect(summary.events.read).toBeGreaterThan(0);
    expect(summary.events.read).toBeLessThan(150);
    expect(summary.events.ok + summary.events.invalid + summary.events.failed).toBe(summary.events.read);
    expect(summary.latency.endToEnd.count).toBe(summary.events.ok);
    expect(readdirSync(dir).filter((name) => name.endsWith('.tmp'))).toEqual([]);
  });
});
