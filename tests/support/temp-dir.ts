// Temporary folders for test files, removed again when the tests that use them are done, so
// that test runs leave nothing in the system's temporary folder.

import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, onTestFinished } from 'vitest';

function makeDir(name: string): string {
  return mkdtempSync(join(tmpdir(), `jetlag-${name}-`));
}

function remove(dir: string): void {
  rmSync(dir, { recursive: true, force: true });
}

/** A folder for a whole test file or describe block: call it there, not inside a test. */
export function tempDirForSuite(name: string): string {
  const dir = makeDir(name);
  afterAll(() => remove(dir));
  return dir;
}

/** A folder for one test: call it inside the test. */
export function tempDirForTest(name: string): string {
  const dir = makeDir(name);
  onTestFinished(() => remove(dir));
  return dir;
}
