// jetlag run as a subprocess (compiled CLI from dist/: `npm run build:host`), stopped by SIGINT.
import { describe, expect, it } from 'vitest';
import { spawn } from 'node:child_process';
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { toyEvents, writeEventFile } from './support/run-files.js';
import { tempDirForTest } from './support/temp-dir.js';

const cli = join(__dirname, '..', 'dist', 'host', 'cli', 'cli.js');

describe('jetlag run interrupted by SIGINT', () => {
  it('stops reading, drains the batches in flight and writes a summary marked partial whose counts add up', async () => {
    const dir = tempDirForTest('sigint');
    const file = writeEventFile(join(dir, 'toy.events'), toyEvents(150, 23, 5));
    const summaryPath = join(dir, 'summary.json');
    // 150 events due at 20 Hz take 7.5 s; the interrupt comes after 2 s (time enough to start on a busy machine)
    const child = spawn(process.execPath, [cli, 'run', file.path, '--rate', '20', '--batch', '4', '--json', summaryPath, '--quiet', '--check', 'none'], { stdio: ['ignore', 'pipe', 'pipe'] });
    let stderr = '';
    child.stderr.on('data', (chunk) => { stderr += chunk; });
    const exited = new Promise<number | null>((resolve) => child.on('exit', (code) => resolve(code)));
    await new Promise((resolve) => setTimeout(resolve, 2000));
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
    expect(readdirSync(dir).filter((name) => name.includes('.tmp-'))).toEqual([]);
  });
});
