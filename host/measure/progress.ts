// A one-line progress bar for terminals: events done, current rate, and an ETA from the bytes
// read so far against the file's size. Redrawn on a timer (not per event) and only when the
// output is a terminal and --quiet is off; otherwise every call is a no-op.

const REDRAW_MS = 200;
const BAR_WIDTH = 24;

export interface ProgressSource {
  eventsDone(): number;
  bytesDone(): number;
}

export class ProgressBar {
  private timer: NodeJS.Timeout | null = null;
  private readonly startMs = performance.now();
  private lastMs = this.startMs;
  private lastEvents = 0;
  private rate = 0;
  private drawn = false;

  constructor(
    private readonly out: NodeJS.WritableStream,
    private readonly source: ProgressSource,
    /** total bytes to read, 0 when unknown (stdin) */
    private readonly bytesTotal: number,
    readonly enabled: boolean,
  ) {}

  start(): void {
    if (!this.enabled || this.timer) return;
    this.timer = setInterval(() => this.draw(), REDRAW_MS);
    this.timer.unref();
  }

  /** The text of the bar for the given state (pure, so it can be tested). */
  static line(events: number, ratePerSecond: number, bytesDone: number, bytesTotal: number, elapsedSeconds: number): string {
    const fraction = bytesTotal > 0 ? Math.min(1, bytesDone / bytesTotal) : 0;
    const filled = Math.round(fraction * BAR_WIDTH);
    const bar = bytesTotal > 0 ? `[${'#'.repeat(filled)}${'.'.repeat(BAR_WIDTH - filled)}] ${(fraction * 100).toFixed(0).padStart(3)}%` : '';
    let eta = '';
    if (bytesTotal > 0 && fraction > 0 && fraction < 1) {
      const remainingSeconds = ((1 - fraction) / fraction) * elapsedSeconds;
      eta = ` ETA ${formatSeconds(remainingSeconds)}`;
    }
    return `${bar} ${events.toLocaleString('en-US')} events ${Math.round(ratePerSecond).toLocaleString('en-US')}/s${eta}`.trimStart();
  }

  private draw(): void {
    const now = performance.now();
    const events = this.source.eventsDone();
    const dt = (now - this.lastMs) / 1000;
    if (dt > 0) {
      const instant = (events - this.lastEvents) / dt;
      this.rate = this.rate === 0 ? instant : 0.7 * this.rate + 0.3 * instant;
    }
    this.lastMs = now;
    this.lastEvents = events;
    this.out.write(`\r${ProgressBar.line(events, this.rate, this.source.bytesDone(), this.bytesTotal, (now - this.startMs) / 1000)}\x1b[K`);
    this.drawn = true;
  }

  stop(): void {
    if (this.timer) clearInterval(this.timer);
    this.timer = null;
    if (this.drawn) this.out.write('\r\x1b[K');
  }
}

function formatSeconds(seconds: number): string {
  if (!Number.isFinite(seconds)) return '?';
  const s = Math.round(seconds);
  if (s < 60) return `${s}s`;
  if (s < 3600) return `${Math.floor(s / 60)}m${String(s % 60).padStart(2, '0')}s`;
  return `${Math.floor(s / 3600)}h${String(Math.floor((s % 3600) / 60)).padStart(2, '0')}m`;
}
