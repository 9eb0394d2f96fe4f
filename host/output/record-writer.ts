// Writing delimited record files (proto/jetlag.proto) safely, through an OutputFile
// (output-file.ts: temporary name, put into place by close(); --force; '-' is stdout).
// Optional gzip. Small records are gathered into 256 KiB blocks; a block write that the
// stream refuses (backpressure) is awaited until 'drain'.
//
// API
//   RecordFileWriter.open(path, { gzip?, stdout?, force? }): Promise<RecordFileWriter>
//     .write(message): Promise<void> | undefined   appends varint length + message; await
//                                                   the promise when one is returned
//     .close(): Promise<void>                       flushes, ends, puts the file in place
//     .abort(): Promise<void>                       drops the temporary file
//     .records, .bytes                              counts written so far (uncompressed)
//   EventFileWriter.open(path, header, options)    header record first, then writeEvent()
//   (jets files: jets-writer.ts JetsFileWriter)
//   (OutputFile, writeTextFile: output-file.ts; TextFileWriter: text-file-writer.ts)

import { encodeEventRecord, type EventRecordFields } from '../formats/event-codec.js';
import { encodeFileHeader, type FileHeader } from '../formats/file-header.js';
import { ProtoWriter } from '../formats/wire.js';
import { OutputFile, type WriterOptions } from './output-file.js';

const BLOCK_BYTES = 256 * 1024;

/** Delimited records onto an OutputFile, gathered into blocks. */
export class RecordFileWriter {
  records = 0;
  bytes = 0;
  private block = new Uint8Array(BLOCK_BYTES);
  private fill = 0;

  private constructor(private readonly output: OutputFile) {}

  static async open(path: string, options: WriterOptions = {}): Promise<RecordFileWriter> {
    return new RecordFileWriter(await OutputFile.open(path, options));
  }

  /** Appends one record. Returns a promise (await it) when the output asked to wait. */
  write(message: Uint8Array): Promise<void> | undefined {
    const need = 10 + message.length;
    let pending: Promise<void> | undefined;
    if (this.fill + need > this.block.length) pending = this.flush();
    if (need > this.block.length) {
      // a record larger than a block goes out on its own
      const framed = new Uint8Array(need);
      const start = writeVarint(framed, 0, message.length);
      framed.set(message, start);
      const done = this.output.write(framed.subarray(0, start + message.length));
      pending = pending ? pending.then(() => done) : done;
    } else {
      this.fill = writeVarint(this.block, this.fill, message.length);
      this.block.set(message, this.fill);
      this.fill += message.length;
    }
    this.records++;
    this.bytes += message.length + varintLength(message.length);
    return pending;
  }

  private flush(): Promise<void> | undefined {
    if (this.fill === 0) return undefined;
    const out = this.block.subarray(0, this.fill);
    this.block = new Uint8Array(BLOCK_BYTES); // the stream keeps `out` until written
    this.fill = 0;
    return this.output.write(out);
  }

  /** Writes what is left, ends the output and renames the temporary file into place. */
  async close(): Promise<void> {
    await this.flush();
    await this.output.close();
  }

  abort(): Promise<void> {
    return this.output.abort();
  }
}

function varintLength(value: number): number {
  let n = 1;
  while (value >= 128) { value = Math.floor(value / 128); n++; }
  return n;
}

function writeVarint(out: Uint8Array, pos: number, value: number): number {
  while (value >= 128) { out[pos++] = (value % 128) | 0x80; value = Math.floor(value / 128); }
  out[pos++] = value;
  return pos;
}

/** An event file: the header record, then one event record per writeEvent(). */
export class EventFileWriter {
  private readonly encoder = new ProtoWriter(4096);
  private constructor(readonly records: RecordFileWriter, readonly header: FileHeader) {}

  static async open(path: string, header: Omit<FileHeader, 'kind' | 'formatVersion'>, options: WriterOptions = {}): Promise<EventFileWriter> {
    const full: FileHeader = { ...header, kind: 'events', formatVersion: 1 };
    const headerBytes = encodeFileHeader(full); // fails on a bad grid before any file is made
    const records = await RecordFileWriter.open(path, options);
    await records.write(headerBytes);
    return new EventFileWriter(records, full);
  }

  writeEvent(fields: EventRecordFields): Promise<void> | undefined {
    return this.records.write(encodeEventRecord(fields, this.encoder));
  }

  close(): Promise<void> {
    return this.records.close();
  }

  abort(): Promise<void> {
    return this.records.abort();
  }
}
