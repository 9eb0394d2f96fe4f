// The synchronous framing state machine of delimited record files (record-reader.ts has the
// API, and the memory note on the bytes it hands out).

export const DEFAULT_MAX_RECORD_BYTES = 64 * 1024 * 1024;

export type RecordSink = (bytes: Uint8Array, offset: number) => void;

/**
 * The framing state machine. feed() takes chunks in order and calls `emit` for each complete
 * record; a framing error is remembered (not thrown) so the caller can first pass on the
 * records emitted before it; finish() reports a record left incomplete at end of input.
 */
export class RecordFramer {
  readonly maxRecordBytes: number;
  /** uncompressed bytes fed so far */
  consumed = 0;
  /** first framing problem: detail text and record offset; nothing is framed after it */
  problem: { detail: string; offset: number } | null = null;

  // the record being assembled across chunks
  private recordOffset = 0;
  private lengthValue = 0;
  private lengthScale = 1;
  private lengthBytes = 0; // > 0 while a length varint is split across chunks
  private body: Uint8Array | null = null; // set while a body is split across chunks
  private bodyFilled = 0;

  constructor(maxRecordBytes = DEFAULT_MAX_RECORD_BYTES) {
    if (!Number.isInteger(maxRecordBytes) || maxRecordBytes < 0) {
      throw new Error(`maxRecordBytes must be a non-negative integer, got ${maxRecordBytes}`);
    }
    this.maxRecordBytes = maxRecordBytes;
  }

  feed(chunk: Uint8Array, emit: RecordSink): void {
    if (this.problem) return;
    const base = this.consumed;
    this.consumed += chunk.length;
    const end = chunk.length;
    let pos = 0;

    // finish a record split across chunks
    if (this.lengthBytes > 0) {
      pos = this.continueLength(chunk, 0);
      if (pos < 0) return; // still incomplete, or failed
      if (!this.startBody(chunk, pos, emit)) return;
      pos = this.afterStart;
    }
    if (this.body !== null) {
      const need = this.body.length - this.bodyFilled;
      const take = Math.min(need, end - pos);
      this.body.set(chunk.subarray(pos, pos + take), this.bodyFilled);
      this.bodyFilled += take;
      pos += take;
      if (this.bodyFilled < this.body.length) return;
      const done = this.body;
      this.body = null;
      emit(done, this.recordOffset);
    }

    // records inside this chunk: views, no copies
    while (pos < end) {
      const start = pos;
      let length = 0;
      let b = chunk[pos++];
      if (b < 0x80) {
        length = b;
      } else {
        // multi-byte length: finish it here if it is all in this chunk
        this.recordOffset = base + start;
        this.lengthValue = b & 0x7f;
        this.lengthScale = 128;
        this.lengthBytes = 1;
        pos = this.continueLength(chunk, pos);
        if (pos < 0) return;
        length = this.lengthValue;
      }
      this.lengthBytes = 0;
      const bodyStart = pos;
      if (length > this.maxRecordBytes) {
        this.problem = { detail: `record length ${length} exceeds the limit of ${this.maxRecordBytes} bytes`, offset: base + start };
        return;
      }
      if (length <= end - bodyStart) {
        pos = bodyStart + length;
        emit(chunk.subarray(bodyStart, pos), base + start);
        continue;
      }
      // body runs into the next chunk: copy what is here into an owned buffer
      this.recordOffset = base + start;
      this.body = new Uint8Array(length);
      this.body.set(chunk.subarray(bodyStart, end), 0);
      this.bodyFilled = end - bodyStart;
      return;
    }
  }

  /** where feed() goes on after startBody() */
  private afterStart = 0;

  /** After a split length completed at `pos`: checks the length and starts the body. */
  private startBody(chunk: Uint8Array, pos: number, emit: RecordSink): boolean {
    const length = this.lengthValue;
    this.lengthBytes = 0;
    if (length > this.maxRecordBytes) {
      this.problem = { detail: `record length ${length} exceeds the limit of ${this.maxRecordBytes} bytes`, offset: this.recordOffset };
      return false;
    }
    if (length <= chunk.length - pos) {
      emit(chunk.subarray(pos, pos + length), this.recordOffset);
      this.afterStart = pos + length;
      return true;
    }
    this.body = new Uint8Array(length);
    this.body.set(chunk.subarray(pos), 0);
    this.bodyFilled = chunk.length - pos;
    this.afterStart = chunk.length;
    return true;
  }

  /**
   * Continues the length varint held in lengthValue/lengthScale/lengthBytes with bytes from
   * chunk[pos..]. Returns the position after the varint, or -1 when the chunk ended first or
   * the varint is bad (then `problem` is set).
   */
  private continueLength(chunk: Uint8Array, pos: number): number {
    while (pos < chunk.length) {
      const b = chunk[pos++];
      this.lengthValue += (b & 0x7f) * this.lengthScale;
      this.lengthScale *= 128;
      this.lengthBytes++;
      if (b < 0x80) {
        if (this.lengthValue > 0xffffffff) {
          this.problem = { detail: `record length ${this.lengthValue} overflows 32 bits`, offset: this.recordOffset };
          return -1;
        }
        return pos;
      }
      if (this.lengthBytes >= 10) {
        this.problem = { detail: 'bad record length: varint longer than 10 bytes', offset: this.recordOffset };
        return -1;
      }
    }
    return -1;
  }

  /** The bytes of a record cut short so far (null when none is being assembled). */
  partialRecord(): Uint8Array | null {
    return this.body === null ? null : this.body.subarray(0, this.bodyFilled);
  }

  /** At end of input: sets `problem` when a record was left incomplete. */
  finish(): void {
    if (this.problem) return;
    if (this.lengthBytes > 0) {
      this.problem = { detail: 'truncated record: the input ends inside its length varint', offset: this.recordOffset };
    } else if (this.body !== null) {
      this.problem = {
        detail: `truncated record: length ${this.body.length} but only ${this.bodyFilled} bytes follow`,
        offset: this.recordOffset,
      };
    }
  }
}
