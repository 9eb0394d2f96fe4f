// CSV tower files, line by line: splits chunks into lines with their byte offsets, checks the
// header and comments before it, and hands data rows to the event assembler (csv-event-builder.ts).

import { InputError } from '../errors.js';
import { describeGrid, sameGrid } from '../clustering/grid.js';
import { parseCsvGridLine } from './csv-grid.js';
import { CSV_HEADER, isSpacedHeader, quote } from './csv-fields.js';
import type { CsvEventBuilder, Pending } from './csv-event-builder.js';

export const MAX_CSV_LINE_BYTES = 1 << 20;

const BYTE_ORDER_MARK = '\xef\xbb\xbf'; // the UTF-8 byte order mark, as latin1

/**
 * Splits chunks into lines with their byte offsets and runs them through the header check
 * and the event builder. Each chunk becomes one latin1 string; a line cut by the chunk end
 * is carried over as text.
 */
export class CsvLineSplitter {
  private carry = ''; // start of a line cut by a chunk end
  private carryOffset = 0;
  private consumed = 0;
  private headerSeen = false;
  private blankOffset = -1; // offset of the first empty line of a run of empty lines
  private blankLine = 0;
  private lineNumber = 0; // of the line last seen, from 1

  constructor(private readonly builder: CsvEventBuilder, private readonly label: string) {}

  feed(chunk: Uint8Array, out: Pending[]): void {
    const bytes = Buffer.isBuffer(chunk) ? chunk : Buffer.from(chunk.buffer, chunk.byteOffset, chunk.byteLength);
    const textOffset = this.consumed - this.carry.length; // byte offset of text[0]
    this.consumed += bytes.length;
    const text = this.carry + bytes.toString('latin1');
    let pos = 0;
    while (pos < text.length) {
      const newline = text.indexOf('\n', pos);
      if (newline < 0) break;
      this.line(text, pos, newline, textOffset + pos, out);
      pos = newline + 1;
    }
    this.carry = pos < text.length ? text.slice(pos) : '';
    this.carryOffset = textOffset + pos;
    this.checkLength(this.carry.length, this.carryOffset, this.lineNumber + 1);
  }

  end(out: Pending[]): void {
    if (this.carry.length > 0) {
      const text = this.carry;
      this.carry = '';
      this.line(text, 0, text.length, this.carryOffset, out);
    }
    if (!this.headerSeen) {
      throw new InputError(this.label, `missing header: expected "${CSV_HEADER}", ${this.lineNumber === 0 ? 'the file is empty' : 'found only comments'}`, undefined, this.consumed, this.lineNumber + 1);
    }
    this.builder.end(out);
  }

  private checkLength(length: number, offset: number, line: number): void {
    if (length > MAX_CSV_LINE_BYTES) {
      throw new InputError(this.label, `line longer than ${MAX_CSV_LINE_BYTES} bytes (the rest of the file is unreadable)`, undefined, offset, line);
    }
  }

  private line(text: string, a: number, b: number, offset: number, out: Pending[]): void {
    const lineNumber = ++this.lineNumber;
    this.checkLength(b - a, offset, lineNumber);
    if (b > a && text.charCodeAt(b - 1) === 13) b--; // CRLF
    if (!this.headerSeen) {
      let line = text.slice(a, b);
      if (lineNumber === 1 && line.startsWith(BYTE_ORDER_MARK)) line = line.slice(BYTE_ORDER_MARK.length);
      if (line.startsWith('#')) { this.comment(line, offset, lineNumber); return; }
      if (line !== CSV_HEADER && !isSpacedHeader(line)) {
        throw new InputError(this.label, `missing header: expected "${CSV_HEADER}", got ${quote(line)}`, undefined, offset, lineNumber);
      }
      this.headerSeen = true;
      return;
    }
    if (b === a) {
      if (this.blankOffset < 0) { this.blankOffset = offset; this.blankLine = lineNumber; }
      return;
    }
    if (this.blankOffset >= 0) {
      this.builder.finishBeforeUnreadable(out);
      throw new InputError(this.label, 'bad event number "" (an empty line before more rows; the rest of the file is unreadable)', undefined, this.blankOffset, this.blankLine);
    }
    this.builder.row(text, a, b, offset, lineNumber, out);
  }

  /** A comment line before the header: a grid statement must agree with the grid read on. */
  private comment(line: string, offset: number, lineNumber: number): void {
    const stated = parseCsvGridLine(line, this.label, offset, lineNumber);
    if (stated !== null && !sameGrid(stated, this.builder.grid)) {
      throw new InputError(this.label, `the file states the grid ${describeGrid(stated)}, but is read on ${describeGrid(this.builder.grid)}: leave out the grid options or make them agree (the rest of the file is unreadable)`, undefined, offset, lineNumber);
    }
  }
}
