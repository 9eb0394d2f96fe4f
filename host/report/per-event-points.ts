// Points for the scatter of service time against towers from a per-event CSV (jetlag run
// --per-event): streamed line by line into a bounded sample (measure/event-sample.ts), so a
// file of any length costs the same memory.

import { createReadStream } from 'node:fs';
import { createInterface } from 'node:readline';
import { InputError } from '../errors.js';
import { EventSample } from '../measure/event-sample.js';

export const PER_EVENT_COLUMNS = ['event', 'towers', 'service_ns'] as const;

export async function readPerEventSample(path: string): Promise<EventSample> {
  const sample = new EventSample();
  const lines = createInterface({ input: createReadStream(path), crlfDelay: Infinity });
  let lineNumber = 0;
  let columns: string[] | null = null;
  let offset = 0;
  for await (const line of lines) {
    lineNumber++;
    const start = offset;
    offset += Buffer.byteLength(line) + 1;
    if (line.trim() === '' || line.startsWith('#')) continue;
    const fields = line.split(',');
    if (columns === null) {
      columns = fields.map((field) => field.trim());
      for (const name of PER_EVENT_COLUMNS) {
        if (!columns.includes(name)) throw new InputError(path, `the header has no column ${name} (expected ${PER_EVENT_COLUMNS.join(',')},...)`, undefined, start, lineNumber);
      }
      continue;
    }
    const value = (name: string) => Number(fields[columns!.indexOf(name)]);
    const event = value('event');
    const towers = value('towers');
    const serviceNs = value('service_ns');
    if (!Number.isFinite(event) || !Number.isFinite(towers) || !Number.isFinite(serviceNs)) {
      throw new InputError(path, `not a per-event row: ${JSON.stringify(line.slice(0, 60))}`, undefined, start, lineNumber);
    }
    sample.add(event, towers, serviceNs);
  }
  if (columns === null) throw new InputError(path, 'empty file: no per-event header', undefined, 0);
  return sample;
}
