// The version of jetlag, read once from package.json so that it is written in one place.
// The file sits one folder up from the sources (host/) and two from the build (dist/host/),
// so the search walks up from this module until it meets jetlag's own package.json.

import { readFileSync } from 'node:fs';

function readVersion(): string {
  for (let folder = new URL('./', import.meta.url); ; folder = new URL('../', folder)) {
    try {
      const manifest = JSON.parse(readFileSync(new URL('package.json', folder), 'utf8')) as { name?: string; version?: string };
      if (manifest.name === 'jetlag' && typeof manifest.version === 'string') return manifest.version;
    } catch {
      // no readable package.json here: keep walking up
    }
    if (folder.pathname === '/') throw new Error('jetlag: package.json not found above ' + import.meta.url);
  }
}

/** e.g. "0.1.0" */
export const VERSION = readVersion();

/** what a file header records as its writer, e.g. "jetlag 0.1.0 generate" */
export function producerName(command: string): string {
  return `jetlag ${VERSION} ${command}`;
}
