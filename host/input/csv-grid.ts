// The grid a CSV tower file states about itself: one comment line before the header,
//
//   # grid etaMin=-3 etaMax=3 etaBins=60 phiBins=64
//   event,ieta,iphi,et
//
// written by export for any grid other than the default (a CSV from the default grid stays
// the plain four-column file), and taken back by the reader, so that a CSV read on the grid
// it came from needs no grid options. Lines starting with `#` before the header are comments;
// the `# grid` one is the only one read. Numbers are written with JavaScript's shortest
// round-trip form, so the grid comes back to the bit.
//
// API
//   csvGridLine(grid): string                the comment line with its line end
//   parseCsvGridLine(line, label, offset, lineNumber): Grid | null
//                                            null: a comment, but not a grid statement;
//                                            throws InputError when it is one but malformed
//   peekCsvGrid(chunks, label): Promise<{ stated, chunks }>
//                                            the grid stated before the header (null if
//                                            none) with its place { grid, offset, line },
//                                            and every chunk again, the peeked ones included
//   chooseCsvGrid(stated, given, label): { grid, origin }
//                                            the stated grid wins over the default; a grid
//                                            given (not the default) that differs is an error
//   openCsvGrid(chunks, given, label): Promise<{ grid, origin, chunks }>
//                                            the two above in turn; the chunks are closed
//                                            when the choice throws

import { InputError } from '../errors.js';
import { checkGrid, describeGrid, sameGrid } from '../clustering/grid.js';
import { DEFAULT_GRID, type Grid } from '../types.js';

export const CSV_GRID_PREFIX = '# grid ';
/** how far the peek looks for the header line: comments above it are short */
const PEEK_BYTES_MAX = 1 << 20;

export type CsvGridOrigin = 'stated in the file' | 'given' | 'the default grid';

export function csvGridLine(grid: Grid): string {
  return `${CSV_GRID_PREFIX}etaMin=${grid.etaMin} etaMax=${grid.etaMax} etaBins=${grid.etaBins} phiBins=${grid.phiBins}\n`;
}

/** A `# grid` line (without its line end) as a grid; null for any other comment. */
export function parseCsvGridLine(line: string, label: string, offset: number, lineNumber: number): Grid | null {
  if (!line.startsWith(CSV_GRID_PREFIX)) return null;
  const values = new Map<string, number>();
  for (const part of line.slice(CSV_GRID_PREFIX.length).trim().split(/\s+/)) {
    const eq = part.indexOf('=');
    const key = eq > 0 ? part.slice(0, eq) : '';
    const text = eq > 0 ? part.slice(eq + 1) : '';
    const value = Number(text);
    if (!['etaMin', 'etaMax', 'etaBins', 'phiBins'].includes(key) || text === '' || !Number.isFinite(value) || values.has(key)) {
      throw new InputError(label, `bad grid statement ${JSON.stringify(part.slice(0, 40))}: expected "${csvGridLine(DEFAULT_GRID).trim()}" (the rest of the file is unreadable)`, undefined, offset, lineNumber);
    }
    values.set(key, value);
  }
  const grid: Grid = {
    etaMin: values.get('etaMin') ?? NaN,
    etaMax: values.get('etaMax') ?? NaN,
    etaBins: values.get('etaBins') ?? NaN,
    phiBins: values.get('phiBins') ?? NaN,
  };
  try {
    checkGrid(grid, 'grid statement');
  } catch (error) {
    throw new InputError(label, `${(error as Error).message} (the rest of the file is unreadable)`, undefined, offset, lineNumber);
  }
  return grid;
}

/** The grid stated in the comment lines before the header, looking at most 1 MiB in. */
export interface StatedGrid {
  grid: Grid;
  /** byte offset and line number of the `# grid` line */
  offset: number;
  line: number;
}

export async function peekCsvGrid(chunks: AsyncGenerator<Uint8Array>, label: string): Promise<{ stated: StatedGrid | null; chunks: AsyncGenerator<Uint8Array> }> {
  const peeked: Uint8Array[] = [];
  let text = '';
  let stated: StatedGrid | null = null;
  let scanned = 0; // text[0, scanned) is whole lines already looked at
  let lineNumber = 1;
  let decided = false;
  try {
    while (!decided && text.length < PEEK_BYTES_MAX) {
      const step = await chunks.next();
      if (step.done) { text += '\n'; decided = true; } else {
        peeked.push(step.value);
        text += Buffer.from(step.value.buffer, step.value.byteOffset, step.value.byteLength).toString('latin1');
      }
      for (let newline = text.indexOf('\n', scanned); newline >= 0; newline = text.indexOf('\n', scanned)) {
        let line = text.slice(scanned, newline);
        if (line.endsWith('\r')) line = line.slice(0, -1);
        if (scanned === 0 && line.startsWith('\xef\xbb\xbf')) line = line.slice(3);
        if (!line.startsWith('#')) { decided = true; break; }
        const grid = parseCsvGridLine(line, label, scanned, lineNumber);
        if (grid) stated = { grid, offset: scanned, line: lineNumber };
        scanned = newline + 1;
        lineNumber++;
      }
    }
  } catch (error) {
    await chunks.return(undefined);
    throw error;
  }
  return { stated, chunks: rejoin(peeked, chunks) };
}

async function* rejoin(peeked: Uint8Array[], rest: AsyncGenerator<Uint8Array>): AsyncGenerator<Uint8Array> {
  try {
    for (const chunk of peeked) yield chunk;
    yield* rest;
  } finally {
    await rest.return(undefined);
  }
}

/** Which grid a CSV is read on, and where that grid came from (named in error texts). */
export function chooseCsvGrid(stated: StatedGrid | null, given: Grid | undefined, label: string): { grid: Grid; origin: CsvGridOrigin } {
  const givenIsDefault = given === undefined || sameGrid(given, DEFAULT_GRID);
  if (stated === null) return { grid: given ?? { ...DEFAULT_GRID }, origin: givenIsDefault ? 'the default grid' : 'given' };
  if (!givenIsDefault && !sameGrid(stated.grid, given!)) {
    throw new InputError(label, `the file states the grid ${describeGrid(stated.grid)}, but the grid given is ${describeGrid(given!)}: leave out the grid options or make them agree`, undefined, stated.offset, stated.line);
  }
  return { grid: stated.grid, origin: 'stated in the file' };
}

/** peekCsvGrid then chooseCsvGrid, closing the chunks when the choice throws. */
export async function openCsvGrid(chunks: AsyncGenerator<Uint8Array>, given: Grid | undefined, label: string): Promise<{ grid: Grid; origin: CsvGridOrigin; chunks: AsyncGenerator<Uint8Array> }> {
  const peeked = await peekCsvGrid(chunks, label);
  try {
    return { ...chooseCsvGrid(peeked.stated, given, label), chunks: peeked.chunks };
  } catch (error) {
    await peeked.chunks.return(undefined);
    throw error;
  }
}
