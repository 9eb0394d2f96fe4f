// Runs before `npm test`: rebuilds the engine and the host only where a source is newer than
// what was built from it. `npm ci` has just built everything (the prepare script), so a test
// run right after it builds nothing; a test run after an edit rebuilds what the edit touched.
// Worker-thread tests load dist/ and build/, so a stale build would test old code.

import { execSync } from 'node:child_process';
import { existsSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';

/** newest modification time (ms) of the .ts files under the folders, and of the single files */
function newestSource(folders, files) {
  let newest = 0;
  const visit = (folder) => {
    for (const entry of readdirSync(folder, { withFileTypes: true })) {
      const path = join(folder, entry.name);
      if (entry.isDirectory()) visit(path);
      else if (entry.name.endsWith('.ts')) newest = Math.max(newest, statSync(path).mtimeMs);
    }
  };
  for (const folder of folders) if (existsSync(folder)) visit(folder);
  for (const file of files) newest = Math.max(newest, statSync(file).mtimeMs);
  return newest;
}

/** oldest modification time (ms) of the outputs, 0 when one is missing */
function oldestOutput(files) {
  return files.every((file) => existsSync(file)) ? Math.min(...files.map((file) => statSync(file).mtimeMs)) : 0;
}

// tsc compiles bench/ too, and the benchmarks import tests/support/
const steps = [
  { script: 'build:wasm', sources: newestSource(['assembly'], ['asconfig.json']), built: oldestOutput(['build/jetlag.wasm', 'build/jetlag.debug.wasm']) },
  { script: 'build:host', sources: newestSource(['host', 'bench', 'tests/support'], ['host/tsconfig.json']), built: oldestOutput(['dist/host/cli/cli.js']) },
];
for (const step of steps) {
  if (step.sources > step.built) execSync(`npm run ${step.script}`, { stdio: 'inherit' });
}
