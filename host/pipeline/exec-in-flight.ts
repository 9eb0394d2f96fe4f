// The events an engine program has been sent and not yet answered, oldest first, each with the
// time it was written (process.hrtime.bigint() as a number of ns). Parallel arrays used as a
// queue, head at `head`; emptied arrays start over, so they do not grow for the life of the
// program.

export class InFlightEvents {
  private readonly events: number[] = [];
  private readonly writtenNs: number[] = [];
  private head = 0;

  get count(): number {
    return this.events.length - this.head;
  }

  push(event: number, writtenNs: number): void {
    this.events.push(event);
    this.writtenNs.push(writtenNs);
  }

  /** the event whose answer is due; null when none is in flight */
  get oldest(): number | null {
    return this.count > 0 ? this.events[this.head] : null;
  }

  /** when the oldest event was written, ns */
  get oldestWrittenNs(): number {
    return this.writtenNs[this.head];
  }

  /** the events in flight, oldest first (a copy) */
  pending(): number[] {
    return this.events.slice(this.head);
  }

  /** The oldest event is answered. */
  dropOldest(): void {
    this.head++;
    if (this.head === this.events.length) this.clear();
  }

  /** Empties the queue; returns the events that were in it, oldest first. */
  takeAll(): number[] {
    const taken = this.pending();
    this.clear();
    return taken;
  }

  private clear(): void {
    this.events.length = 0;
    this.writtenNs.length = 0;
    this.head = 0;
  }
}
