// A one-line progress bar for terminals: events done, current rate, and, when the size of the
// job is known, a bar and an ETA. Redrawn on a timer (not per event) and only when the output
// is a terminal and --quiet is off; otherwise every call is a no-op.
//
// The bar's percentage is of what is actually known to be done: events against a known event
// total, or else bytes of input whose events are done against the input's size. An input of
// unknown size (stdin, gzip, --events) shows events and rate only, never a guess.

const REDRAW_MS = 200;
const BAR_WIDTH = 24;

export interface ProgressSource {
  /** events finished (their results in hand, or written) */
  eventsDone(): number;
  /** bytes of input up to the last finished event; only read when a byte total is given */
  bytesDone?(): number;
}

/** The size of the job, when known: events (preferred) or bytes of input; absent or 0 when unknown. */
export interface ProgressTotal {
  events?: number;
  bytes?: number;
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
    private readonly total: ProgressTotal,
    readonly enabled: boolean,
  ) {}

  start(): void {
    if (!this.enabled || this.timer) return;
    this.timer = setInterval(() => this.draw(), REDRAW_MS);
    this.timer.unref();
  }

  /**
   * The text of the bar for the given state (pure, so it can be tested): done and total in one
   * unit (events or bytes), total 0 when unknown.
   */
  static line(events: number, ratePerSecond: number, done: number, total: number, elapsedSeconds: number): string {
    const fraction = total > 0 ? Math.min(1, done / total) : 0;
    const filled = Math.round(fraction * BAR_WIDTH);
    const bar = total > 0 ? `[${'#'.repeat(filled)}${'.'.repeat(BAR_WIDTH - filled)}] ${(fraction * 100).toFixed(0).padStart(3)}%` : '';
    let eta = '';
    if (total > 0 && fraction > 0 && fraction < 1) {
      const remainingSeconds = ((1 - fraction) / fraction) * elapsedSeconds;
      eta = ` ETA ${formatSeconds(remainingSeconds)}`;
    }
    return `${bar} ${events.toLocaleString('en-US')} events ${Math.round(ratePerSecond).toLocaleString('en-US')}/s${eta}`.trimStart();
  }

  private doneAndTotal(events: number): [number, number] {
    const { events: eventsTotal, bytes: bytesTotal } = this.total;
    if (eventsTotal !== undefined && eventsTotal > 0) return [events, eventsTotal];
    if (bytesTotal !== undefined && bytesTotal > 0 && this.source.bytesDone) return [this.source.bytesDone(), bytesTotal];
    return [0, 0];
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
    const [done, total] = this.doneAndTotal(events);
    this.out.write(`\r${ProgressBar.line(events, this.rate, done, total, (now - this.startMs) / 1000)}\x1b[K`);
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
