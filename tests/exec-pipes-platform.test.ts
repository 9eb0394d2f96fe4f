// What the blocking pipes to an engine program need from the system (host/pipeline/exec-fifo.ts):
// where mkfifo or /proc/self/fd is missing, jetlag stops at start with one line naming the
// program (ExecEngineError, exit 2), and leaves nothing open behind it.

import { spawnSync } from 'node:child_process';
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ExecEngine, ExecEngineError } from '../host/pipeline/exec-engine.js';
import { checkPipePlatform } from '../host/pipeline/exec-fifo.js';
import { ProgramProcess } from '../host/pipeline/exec-process.js';
import type { Watchdog } from '../host/pipeline/exec-watchdog.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS } from '../host/types.js';
import { toyEvents, writeEventFile } from './support/run-files.js';
import { tempDirForTest } from './support/temp-dir.js';

const FIXTURE = join(import.meta.dirname, 'fixtures', 'engines', 'faulty-engine.mjs');
const CLI = join(import.meta.dirname, '..', 'dist', 'host', 'cli', 'cli.js');
const LABEL = 'exec:faulty-engine well';

/** Runs `body` with a PATH where no mkfifo is found (the program is named by its full path). */
async function withoutMkfifo<T>(body: () => Promise<T>): Promise<T> {
  const saved = process.env.PATH;
  process.env.PATH = tempDirForTest('exec-no-mkfifo');
  try {
    return await body();
  } finally {
    process.env.PATH = saved;
  }
}

function openFdCount(): number {
  return readdirSync('/proc/self/fd').length;
}

describe('the pipes to an engine program', () => {
  it('that mkfifo cannot make stop the start with an ExecEngineError naming the program', async () => {
    const started = withoutMkfifo(() => ExecEngine.start({
      argv: [process.execPath, FIXTURE, 'well', '-1'],
      label: LABEL,
      grid: DEFAULT_GRID,
      settings: { ...DEFAULT_SETTINGS },
      producer: 'jetlag tests',
      timeoutMs: 5000,
      maxRestarts: 3,
    }));
    await expect(started).rejects.toBeInstanceOf(ExecEngineError);
    await expect(started).rejects.toThrow(new RegExp(`^${LABEL}: cannot make the pipes to the program with mkfifo: `));
  });

  it('that cannot be made leave no file descriptor open', async () => {
    const before = openFdCount();
    await withoutMkfifo(async () => {
      expect(() => new ProgramProcess(
        {
          argv: [process.execPath, FIXTURE, 'well', '-1'],
          label: LABEL,
          grid: DEFAULT_GRID,
          settings: { ...DEFAULT_SETTINGS },
          headerRecord: new Uint8Array(0),
          timeoutMs: 5000,
          startTimeoutMs: 5000,
          maxRecordBytes: 1 << 20,
        },
        { answered: () => {}, faulted: () => {} },
        // never reached: the constructor fails before the program runs
        {} as unknown as Watchdog,
      )).toThrow(ExecEngineError);
    });
    expect(openFdCount()).toBe(before);
  });

  it('that cannot be made end `jetlag cluster` with one line and exit 2, not an internal error', () => {
    const dir = tempDirForTest('exec-no-mkfifo-cli');
    const input = writeEventFile(join(dir, 'events.jetlag'), toyEvents(3, 1, 2)).path;
    const run = spawnSync(process.execPath, [CLI, 'cluster', input, '--engine', `exec:"${process.execPath}" "${FIXTURE}" well -1`, '--out', join(dir, 'out.jets')], {
      encoding: 'utf8',
      env: { ...process.env, PATH: tempDirForTest('exec-no-mkfifo') },
    });
    expect(run.status).toBe(2);
    expect(run.stderr).toMatch(/^jetlag cluster: exec:.*: cannot make the pipes to the program with mkfifo: [^\n]*\n$/);
  });

  it('need /proc/self/fd: where it is missing, one line at start names the program', () => {
    const missing = join(tempDirForTest('exec-no-proc'), 'proc', 'self', 'fd');
    expect(() => checkPipePlatform(LABEL, missing)).toThrow(ExecEngineError);
    expect(() => checkPipePlatform(LABEL, missing)).toThrow(`${LABEL}: engine programs need ${missing} (the timeout wakes a blocked read through it), which this system does not have`);
  });
});
