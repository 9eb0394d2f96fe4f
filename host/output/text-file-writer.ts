// Lines of text (CSV, JSON lines) written safely through an OutputFile (output-file.ts).

import { OutputFile, type WriterOptions } from './output-file.js';

/** Lines of text onto an OutputFile, gathered into blocks of about 64 KiB. */
export class TextFileWriter {
  private parts: string[] = [];
  private size = 0;

  private constructor(private readonly output: OutputFile) {}

  static async open(path: string, options: WriterOptions = {}): Promise<TextFileWriter> {
    return new TextFileWriter(await OutputFile.open(path, options));
  }

  /** Appends text (include the newline). Returns a promise (await it) when the output asked to wait. */
  write(text: string): Promise<void> | undefined {
    this.parts.push(text);
    this.size += text.length;
    return this.size >= 65536 ? this.flush() : undefined;
  }

  private flush(): Promise<void> | undefined {
    if (this.parts.length === 0) return undefined;
    const bytes = Buffer.from(this.parts.join(''), 'utf8');
    this.parts = [];
    this.size = 0;
    return this.output.write(bytes);
  }

  async close(): Promise<void> {
    await this.flush();
    await this.output.close();
  }

  abort(): Promise<void> {
    return this.output.abort();
  }
}
