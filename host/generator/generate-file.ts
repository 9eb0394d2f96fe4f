// A file of invented demo events from the toy generator (generate.ts), for `jetlag generate`
// and `jetlag demo`. The writer replaces its file only once complete: an error part way leaves
// no file behind.

import { generateEvents, type GeneratorSettings } from './generate.js';
import { EventFileWriter, type WriterOptions } from '../output/record-writer.js';
import type { Grid } from '../types.js';

export interface GeneratedFileHeader {
  producer: string;
  label: string;
}

export async function writeGeneratedEvents(
  path: string, grid: Grid, settings: GeneratorSettings, header: GeneratedFileHeader, options: WriterOptions = {},
): Promise<void> {
  const writer = await EventFileWriter.open(path, { grid, producer: header.producer, label: header.label }, options);
  try {
    for (const event of generateEvents(grid, settings)) {
      const pending = settings.raw
        ? writer.writeEvent({ event: event.event, depositEta: event.depositEta, depositPhi: event.depositPhi, depositEt: event.depositEt })
        : writer.writeEvent({ event: event.event, towerIndex: event.towerIndex, towerEt: event.towerEt });
      if (pending) await pending;
    }
    await writer.close();
  } catch (error) {
    await writer.abort();
    throw error;
  }
}
