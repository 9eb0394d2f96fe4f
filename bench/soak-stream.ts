// The soak's generated stream (bench/soak.ts starts it as a child process): an event file's
// header, then `events` records of invented toy events (the fictional "Halden ring", toy
// generator), written into a pipe as fast as the reader takes them. A pool of `distinct`
// generated events is cycled, each record re-encoded with its own event number, so the stream
// can run to many GiB without a file on disk and without spending a core on the generator.
// It runs as a process of its own so that its memory and CPU are not the soak's: the run's
// resident memory is then the run's alone.
//
// usage (from soak.ts): node dist/bench/soak-stream.js PIPE EVENTS PILEUP DISTINCT SEED
// Messages to the parent (IPC): { kind: 'progress' | 'done', events, bytes } (events and bytes
// written so far), and { kind: 'failed', message, events, bytes } when the pipe closed early.

import { createWriteStream } from 'node:fs';
import type { Writable } from 'node:stream';
import { encodeEventRecord } from '../host/formats/event-codec.js';
import { encodeFileHeader } from '../host/formats/file-header.js';
import { delimit, ProtoWriter } from '../host/formats/wire.js';
import { generateEvents } from '../host/generator/generate.js';
import { DEFAULT_GRID } from '../host/types.js';

export interface StreamMessage {
  kind: 'progress' | 'done' | 'failed';
  events: number;
  bytes: number;
  message?: string;
}

/** records are gathered into writes of about this size (fewer system calls on the pipe) */
const WRITE_BYTES = 1 << 18;
/** a progress message at most this often */
const PROGRESS_MS = 1000;

function send(message: StreamMessage): void {
  if (process.send) process.send(message);
}

/** Resolves on the first of the named events (an error is kept by the stream's own listener). */
function settled(stream: Writable, names: string[]): Promise<void> {
  return new Promise((resolve) => {
    const done = () => { for (const name of names) stream.off(name, done); resolve(); };
    for (const name of names) stream.once(name, done);
  });
}

async function main(): Promise<void> {
  const [pipePath, eventsText, pileupText, distinctText, seedText] = process.argv.slice(2);
  const events = Number(eventsText);
  const pileup = Number(pileupText);
  const distinct = Math.max(1, Math.min(Number(distinctText), events));
  const seed = Number(seedText);
  const pool: { towerIndex: Int32Array; towerEt: Float64Array }[] = [];
  for (const e of generateEvents(DEFAULT_GRID, { events: distinct, pileup, seed })) pool.push({ towerIndex: e.towerIndex, towerEt: e.towerEt });

  const out = createWriteStream(pipePath, { highWaterMark: WRITE_BYTES });
  let closedEarly: Error | null = null;
  out.on('error', (error) => { closedEarly = error; });
  let written = 0;
  let bytes = 0;
  let lastProgressMs = Date.now();
  const header = delimit(encodeFileHeader({ kind: 'events', grid: DEFAULT_GRID, producer: 'jetlag soak', label: `invented toy events (Halden ring scenario), pileup ${pileup}, generated on the fly` }));
  out.write(header);
  bytes += header.length;
  const writer = new ProtoWriter(1 << 16);
  const parts: Uint8Array[] = [];
  let partBytes = 0;
  for (let k = 0; k < events && closedEarly === null; k++) {
    const source = pool[k % pool.length];
    // delimit copies the writer's bytes, so the writer is reused
    const record = delimit(encodeEventRecord({ event: k, towerIndex: source.towerIndex, towerEt: source.towerEt }, writer));
    parts.push(record);
    partBytes += record.length;
    written++;
    if (partBytes >= WRITE_BYTES || k === events - 1) {
      const chunk = Buffer.concat(parts);
      parts.length = 0;
      partBytes = 0;
      if (!out.write(chunk)) await settled(out, ['drain', 'close', 'error']);
      bytes += chunk.length;
      const nowMs = Date.now();
      if (nowMs - lastProgressMs >= PROGRESS_MS) { send({ kind: 'progress', events: written, bytes }); lastProgressMs = nowMs; }
    }
  }
  if (closedEarly === null) {
    out.end();
    await settled(out, ['finish', 'close', 'error']);
  }
  const failure = closedEarly as Error | null;
  send(failure === null ? { kind: 'done', events: written, bytes } : { kind: 'failed', events: written, bytes, message: failure.message });
  process.disconnect?.();
}

await main();
