// Candidate JSON lines (candidate-reader.ts): one object per line, as `jetlag cluster` writes them.

import { oneLineText } from '../formats/line-text.js';
import type { CandidateEvent, CandidateGroomed } from './candidate-reader.js';
import { emptyEvent, JetColumns, quote, type Line } from './candidate-lines.js';

function jsonValue(value: unknown): number {
  // our writer stores a non-finite double as null
  if (value === null) return NaN;
  return typeof value === 'number' ? value : NaN;
}

export async function* jsonLineEvents(input: AsyncGenerator<Line>, label: string): AsyncGenerator<CandidateEvent> {
  void label;
  const columns = new JetColumns();
  for await (const { text, offset, number } of input) {
    const at = `line ${number} (byte ${offset})`;
    const trimmed = text.trim();
    if (trimmed.length === 0) continue;
    let value: unknown;
    try {
      value = JSON.parse(trimmed.startsWith('\ufeff') ? trimmed.slice(1) : trimmed);
    } catch (error) {
      yield emptyEvent(null, offset, `${at} is not JSON (${oneLineText((error as Error).message, 200)})`);
      continue;
    }
    const line = value as { event?: unknown; jets?: unknown; error?: unknown };
    if (typeof value !== 'object' || value === null || Array.isArray(value)) {
      yield emptyEvent(null, offset, `${at} is not a JSON object`);
      continue;
    }
    if (typeof line.event !== 'number' || !Number.isSafeInteger(line.event) || line.event < 0) {
      yield emptyEvent(null, offset, `${at} has no event number (an integer >= 0), got ${quote(JSON.stringify(line.event) ?? 'nothing')}`);
      continue;
    }
    const event = line.event;
    if (typeof line.error === 'string' && line.error !== '') {
      yield emptyEvent(event, offset, `the candidate reports the event invalid: ${oneLineText(line.error)}`);
      continue;
    }
    if (!Array.isArray(line.jets)) {
      yield emptyEvent(event, offset, `${at} has no "jets" array`);
      continue;
    }
    let problem = '';
    let hasMass = line.jets.length > 0;
    columns.count = 0;
    const groomed = new LineGroomed();
    for (let k = 0; k < line.jets.length; k++) {
      const jet = line.jets[k] as { pt?: unknown; y?: unknown; phi?: unknown; m?: unknown } | null;
      if (typeof jet !== 'object' || jet === null) { problem = `jet ${k} is not an object`; break; }
      const missing = (['pt', 'y', 'phi'] as const).find((key) => !(key in jet) || (typeof jet[key] !== 'number' && jet[key] !== null));
      if (missing) { problem = `jet ${k} has no number "${missing}"`; break; }
      if (!('m' in jet)) hasMass = false;
      columns.push(jsonValue(jet.pt), jsonValue(jet.y), jsonValue(jet.phi), 'm' in jet ? jsonValue(jet.m) : 0);
      groomed.add(jet as Record<string, unknown>);
    }
    if (problem !== '') {
      columns.count = 0;
      yield emptyEvent(event, offset, `${at}: ${problem}`);
      continue;
    }
    const taken = columns.take(event, offset, hasMass);
    const groomedColumns = groomed.columns(taken.count);
    yield groomedColumns ? { ...taken, groomed: groomedColumns } : taken;
  }
}

/** The "trim" and "softdrop" objects' pt and m of one line's jets; a groomer counts when every jet has it. */
class LineGroomed {
  private readonly values: Record<'trim' | 'softdrop', number[]> = { trim: [], softdrop: [] };

  add(jet: Record<string, unknown>): void {
    for (const name of ['trim', 'softdrop'] as const) {
      const groomed = jet[name] as { pt?: unknown; m?: unknown } | undefined;
      if (typeof groomed !== 'object' || groomed === null) continue;
      if ((typeof groomed.pt === 'number' || groomed.pt === null) && (typeof groomed.m === 'number' || groomed.m === null)) {
        this.values[name].push(jsonValue(groomed.pt), jsonValue(groomed.m));
      }
    }
  }

  columns(count: number): CandidateGroomed | null {
    if (count === 0) return null;
    const out: CandidateGroomed = {};
    for (const name of ['trim', 'softdrop'] as const) {
      const flat = this.values[name];
      if (flat.length !== 2 * count) continue;
      const pt = new Float64Array(count);
      const mass = new Float64Array(count);
      for (let k = 0; k < count; k++) { pt[k] = flat[2 * k]; mass[k] = flat[2 * k + 1]; }
      out[name] = { pt, mass };
    }
    return out.trim || out.softdrop ? out : null;
  }
}
