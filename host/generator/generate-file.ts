// A file of invented demo events from the toy generator (generate.ts), for `jetlag generate`
// and `jetlag demo`. The writer replaces its file only once complete: an error part way leaves
// no file behind.

import { generateEvents, type GeneratorSettings } from './generate.js';
import { EventFileWriter } from '../output/record-writer.js';
import type { WriterOptions } from '../output/output-file.js';
import type { Grid } from '../types.js';

export interface GeneratedFileHeader {
  producer: string;
  label: string;
}

/** onEvent: called with the number of events written so far after each one (a progress bar reads it) */
export async function writeGeneratedEvents(
  path: string, grid: Grid, settings: GeneratorSettings, header: GeneratedFileHeader, options: WriterOptions = {},
  onEvent?: (eventsWritten: number) => void,
): Promise<void> {
  const writer = await EventFileWriter.open(path, { grid, producer: header.producer, label: header.label }, options);
  let written = 0;
  try {
    for (const event of generateEvents(grid, settings)) {
      const pending = settings.raw
        ? writer.writeEvent({ event: event.event, depositEta: event.depositEta, depositPhi: event.depositPhi, depositEt: event.depositEt })
        : writer.writeEvent({ event: event.event, towerIndex: event.towerIndex, towerEt: event.towerEt });
      if (pending) await pending;
      written++;
      if (onEvent) onEvent(written);
    }
    await writer.close();
  } catch (error) {
    await writer.abort();
    throw error;
  }
}
