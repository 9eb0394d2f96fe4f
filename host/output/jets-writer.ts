// A jets file written safely: the header record, then one jets record per event.

import { encodeFileHeader, type FileHeader, type JetsFileSettings } from '../formats/file-header.js';
import { encodeJetsRecord, jetsFileHeader, type JetsHeaderText, type JetsRecordFields } from '../formats/jets-codec.js';
import type { Grid } from '../types.js';
import { RecordFileWriter } from './record-writer.js';
import type { WriterOptions } from './output-file.js';

/** A jets file: the header record, then one jets record per writeJets(). */
export class JetsFileWriter {
  private constructor(readonly records: RecordFileWriter, readonly header: FileHeader) {}

  static async open(path: string, grid: Grid, settings: JetsFileSettings, text: JetsHeaderText = {}, options: WriterOptions = {}): Promise<JetsFileWriter> {
    const header = jetsFileHeader(grid, settings, text);
    const headerBytes = encodeFileHeader(header);
    const records = await RecordFileWriter.open(path, options);
    await records.write(headerBytes);
    return new JetsFileWriter(records, header);
  }

  writeJets(fields: JetsRecordFields): Promise<void> | undefined {
    return this.records.write(encodeJetsRecord(fields));
  }

  close(): Promise<void> {
    return this.records.close();
  }

  abort(): Promise<void> {
    return this.records.abort();
  }
}
