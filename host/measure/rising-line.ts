// A straight line fitted to a run's values as they come, for the open loop's rates and backlog
// (open-loop-feed.ts).

/**
 * A least-squares line through values given one at a time at x = 0, 1, 2, ..., kept as sums:
 * a run of millions of events keeps no value per event (npm run soak watches its memory).
 */
export class RisingLine {
  private n = 0;
  private sumX = 0;
  private sumXX = 0;
  private sumY = 0;
  private sumXY = 0;

  add(y: number): void {
    const x = this.n++;
    this.sumX += x;
    this.sumXX += x * x;
    this.sumY += y;
    this.sumXY += x * y;
  }

  /** values given so far */
  get count(): number {
    return this.n;
  }

  /** The line's rise per step; 0 with fewer than two values. */
  slope(): number {
    const n = this.n;
    if (n < 2) return 0;
    return (n * this.sumXY - this.sumX * this.sumY) / (n * this.sumXX - this.sumX * this.sumX);
  }

  /** How much the line rises from the first value to the last; 0 with fewer than two. */
  rise(): number {
    return this.n < 2 ? 0 : this.slope() * (this.n - 1);
  }
}
