// The built command line (dist/: `npm run build:host`) stopped by a signal while it writes an
// output: the temporary file (`.NAME.PID.XXXXXX.tmp`) goes with it, and no output appears.

import { spawn } from 'node:child_process';
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it, vi } from 'vitest';
import { tempDirForTest } from './support/temp-dir.js';

const cli = join(__dirname, '..', 'dist', 'host', 'cli', 'cli.js');
// process starts and a run on a shared machine
vi.setConfig({ testTimeout: 60_000 });

/** Starts `args`, waits until a temporary file shows in `dir`, sends the signals, returns how it ended. */
async function stopWhileWriting(dir: string, args: string[], signals: NodeJS.Signals[]) {
  const child = spawn(process.execPath, [cli, ...args], { stdio: ['ignore', 'ignore', 'pipe'] });
  let stderr = '';
  child.stderr.on('data', (chunk) => { stderr += chunk; });
  const ended = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((resolve) => child.on('exit', (code, signal) => resolve({ code, signal })));
  let sawTemporary = false;
  for (let k = 0; k < 600 && !sawTemporary; k++) {
    sawTemporary = readdirSync(dir).some((name) => name.endsWith('.tmp'));
    if (!sawTemporary) await new Promise((resolve) => setTimeout(resolve, 50));
  }
  for (const signal of signals) {
    child.kill(signal);
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
  return { ...(await ended), sawTemporary, stderr };
}

describe('a command stopped by a signal while writing', () => {
  for (const signal of ['SIGINT', 'SIGTERM'] as const) {
    it(`removes its temporary output on ${signal} and ends by that signal`, async () => {
      const dir = tempDirForTest('signal-out');
      const out = join(dir, 'big.events');
      // enough invented events that writing them takes many seconds
      const result = await stopWhileWriting(dir, ['generate', '--events', '200000', '--pileup', '200', '--out', out], [signal]);
      expect(result.sawTemporary).toBe(true);
      expect(result).toMatchObject({ code: null, signal });
      expect(readdirSync(dir)).toEqual([]);
    });
  }

  it('removes the temporaries of run when a second Ctrl-C quits at once', async () => {
    const dir = tempDirForTest('signal-run');
    const events = join(dir, 'toy.events');
    const generated = spawn(process.execPath, [cli, 'generate', '--events', '400', '--pileup', '20', '--out', events], { stdio: 'ignore' });
    expect(await new Promise((resolve) => generated.on('exit', resolve))).toBe(0);
    const jets = join(dir, 'toy.jets');
    // 400 events due at 20 Hz take 20 s: the two interrupts come long before the end
    const result = await stopWhileWriting(dir, ['run', events, '--rate', '20', '--out', jets, '--quiet', '--check', 'none'], ['SIGINT', 'SIGINT']);
    expect(result.sawTemporary).toBe(true);
    expect(result.code).toBe(130);
    expect(readdirSync(dir)).toEqual(['toy.events']);
  });
});
