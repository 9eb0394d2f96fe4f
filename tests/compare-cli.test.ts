// jetlag compare as users meet it: subprocesses of the compiled CLI (npm test builds it), exit
// codes 0 (agreement met), 1 (below --require), 2 (unreadable input). Events come from the toy
// generator (invented data).

import { spawnSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { tempDirForSuite } from './support/temp-dir.js';

const cli = join(import.meta.dirname, '..', 'dist', 'host', 'cli', 'cli.js');
const directory = tempDirForSuite('compare-cli');

function jetlag(...args: string[]) {
  const result = spawnSync(process.execPath, [cli, ...args], { cwd: directory, encoding: 'utf8' });
  return { code: result.status, stdout: result.stdout, stderr: result.stderr };
}

beforeAll(() => {
  expect(jetlag('generate', '--events', '30', '--pileup', '40', '--seed', '8', '--out', 'events.pb').code).toBe(0);
  expect(jetlag('cluster', 'events.pb', '--engine', 'reference', '--ptmin', '20', '--out', 'same.jets', '-q').code).toBe(0);
  expect(jetlag('cluster', 'events.pb', '--emulate', 'fixed:0.5', '--ptmin', '20', '--out', 'fixed.jets', '-q').code).toBe(0);
});

describe('jetlag compare exit codes', () => {
  it('0 when the candidate is the reference itself', () => {
    const result = jetlag('compare', 'events.pb', 'same.jets');
    expect(result.code).toBe(0);
    expect(result.stdout).toMatch(/^PASS: agreeing fraction 1 >= --require 0.999$/m);
  });

  it('1 when fewer events agree than --require asks', () => {
    const result = jetlag('compare', 'events.pb', 'fixed.jets');
    expect(result.code).toBe(1);
    expect(result.stdout).toMatch(/^FAIL: agreeing fraction [0-9.]+ < --require 0.999$/m);
  });

  it('0 for the same candidate when --require 0 asks for nothing', () => {
    expect(jetlag('compare', 'events.pb', 'fixed.jets', '--require', '0').code).toBe(0);
  });

  it('2 with one line naming file and byte offset for a CSV candidate without its header', () => {
    writeFileSync(join(directory, 'bad.csv'), '0,30,0,1\n');
    const result = jetlag('compare', 'events.pb', 'bad.csv');
    expect(result.code).toBe(2);
    expect(result.stderr.trim().split('\n').at(-1)).toBe('jetlag compare: bad.csv, line 1, byte 0: missing header: expected "event,pt,y,phi" or "event,pt,y,phi,m", got "0,30,0,1"');
  });

  it('2 for a --require outside [0, 1]', () => {
    expect(jetlag('compare', 'events.pb', 'same.jets', '--require', '1.5').code).toBe(2);
  });
});
