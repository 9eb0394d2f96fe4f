// A candidate CSV cannot grow one event's jets without bound: past the cap the event is refused
// with the row's line and byte, and the events after it are read as usual.
import { describe, expect, it } from 'vitest';
import { csvEvents } from '../host/input/candidate-csv.js';
import type { Line } from '../host/input/candidate-lines.js';

async function* linesOf(texts: string[]): AsyncGenerator<Line> {
  let offset = 0;
  for (let k = 0; k < texts.length; k++) {
    yield { text: texts[k], offset, number: k + 1 };
    offset += Buffer.byteLength(texts[k]) + 1;
  }
}

describe('candidate CSV, jets per event', () => {
  it('refuses an event with more jets than the cap, naming line and byte, and reads on', async () => {
    const rows = ['event,pt,y,phi', '0,50,0.1,1', '0,40,0.2,2', '0,30,0.3,3', '1,20,0.4,1'];
    const events = [];
    for await (const event of csvEvents(linesOf(rows), 'cands.csv', 2)) events.push(event);
    expect(events).toHaveLength(2);
    expect(events[0].event).toBe(0);
    expect(events[0].error).toBe('row at line 4, byte 37: more than 2 jets in one event, more than any grid has cells');
    expect(events[1].error).toBe('');
    expect(Array.from(events[1].pt)).toEqual([20]);
  });

  it('keeps an event with exactly the cap of jets', async () => {
    const rows = ['event,pt,y,phi', '0,50,0.1,1', '0,40,0.2,2'];
    const events = [];
    for await (const event of csvEvents(linesOf(rows), 'cands.csv', 2)) events.push(event);
    expect(events[0].error).toBe('');
    expect(events[0].count).toBe(2);
  });
});
