// `npm run test:farm`: tests that start a real batch system on this machine. Slow (an apt-get
// install on the first run) and kept out of `npm test`, whose pattern (*.test.ts) they do not match.
import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    root: fileURLToPath(new URL('../..', import.meta.url)),
    include: ['tests/farm/**/*.farm.ts'],
    testTimeout: 900_000,
    hookTimeout: 900_000,
  },
});
