// Caps a hostile file cannot get around: free text in a file header is bounded, so a header
// cannot fill reports and outputs that echo it. Invented headers.

import { Readable } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { encodeFileHeader, MAX_HEADER_TEXT_CHARS } from '../host/formats/file-header.js';
import { delimit } from '../host/formats/wire.js';
import { openEventSource } from '../host/input/event-source.js';
import { DEFAULT_GRID } from '../host/types.js';

function headerWithLabel(label: string): Buffer {
  return Buffer.from(delimit(encodeFileHeader({ kind: 'events', formatVersion: 1, grid: { ...DEFAULT_GRID }, producer: 'test', label })));
}

describe('a file header', () => {
  it('with a label at the limit is read', async () => {
    const source = await openEventSource(Readable.from([headerWithLabel('x'.repeat(MAX_HEADER_TEXT_CHARS))]), { fileLabel: 'long.events' });
    expect(source.header.label.length).toBe(MAX_HEADER_TEXT_CHARS);
  });

  it('with a longer label is refused in one line naming byte 0', async () => {
    await expect(openEventSource(Readable.from([headerWithLabel('x'.repeat(MAX_HEADER_TEXT_CHARS + 1))]), { fileLabel: 'long.events' }))
      .rejects.toThrow(`long.events, byte 0: bad file header: file header label is ${MAX_HEADER_TEXT_CHARS + 1} characters long, more than the limit of ${MAX_HEADER_TEXT_CHARS}`);
  });
});

describe('free text from a file', () => {
  it('in an event\'s error text comes back on one line, control characters escaped, capped', async () => {
    const { EventRecordDecoder, encodeEventRecord } = await import('../host/formats/event-codec.js');
    const decoder = new EventRecordDecoder();
    decoder.decode(encodeEventRecord({ event: 3, error: 'bad\nline\u001b[2J\u2028end' }));
    expect(decoder.error).toBe('bad\\u000aline\\u001b[2J\\u2028end');
    decoder.decode(encodeEventRecord({ event: 4, error: 'x'.repeat(5000) }));
    expect(decoder.error).toBe(`${'x'.repeat(1000)}… (4000 more characters)`);
  });
});
