// Engine programs run in process groups of their own (host/pipeline/exec-spawn.ts), out of the
// reach of a terminal's Ctrl-C; jetlag kills the groups still running when it ends
// (host/pipeline/exec-groups.ts). Run through the built CLI (npm run build:host), as a user does.
import { afterEach, describe, expect, it } from 'vitest';
import { spawn } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { toyEvents, writeEventFile } from './support/run-files.js';
import { tempDirForSuite } from './support/temp-dir.js';
import { alive } from './support/process-alive.js';

const cli = join(import.meta.dirname, '..', 'dist', 'host', 'cli', 'cli.js');
const fixture = join(import.meta.dirname, 'fixtures', 'engines', 'faulty-engine.mjs');
const dir = tempDirForSuite('exec-program-groups');

async function until(done: () => boolean, timeoutMs: number): Promise<boolean> {
  const end = Date.now() + timeoutMs;
  while (Date.now() < end) {
    if (done()) return true;
    await new Promise((resolve) => setTimeout(resolve, 50));
  }
  return done();
}

let leftOver: number[] = [];
afterEach(() => {
  for (const pid of leftOver) try { process.kill(pid, 'SIGKILL'); } catch { /* gone */ }
  leftOver = [];
});

describe('an engine program still running when jetlag quits', () => {
  it('is killed with its children when a second Ctrl-C ends the run at once', { timeout: 30_000 }, async () => {
    const file = writeEventFile(join(dir, 'toy.events'), toyEvents(20, 5, 2));
    const pidFile = join(dir, 'child.pid');
    // the program hangs on event 3 with a child (`sleep 60`) of its own; the timeout is far off
    const jetlag = spawn(process.execPath, [cli, 'run', file.path, '--workers', '1', '--check', 'none', '--quiet',
      '--engine', `exec:${process.execPath} ${fixture} hang-child 3 ${pidFile}`, '--engine-timeout-ms', '600000'], { stdio: 'ignore' });
    const exited = new Promise<number | null>((resolve) => jetlag.on('exit', (code) => resolve(code)));
    expect(await until(() => existsSync(pidFile) && readFileSync(pidFile, 'utf8').length > 0, 20_000)).toBe(true);
    const child = Number(readFileSync(pidFile, 'utf8'));
    leftOver.push(child);
    expect(alive(child)).toBe(true);
    jetlag.kill('SIGINT');
    await new Promise((resolve) => setTimeout(resolve, 200));
    jetlag.kill('SIGINT');
    expect(await exited).toBe(130);
    // the group is killed on the way out: the child goes with it, not 60 s later
    expect(await until(() => !alive(child), 5_000)).toBe(true);
  });
});
