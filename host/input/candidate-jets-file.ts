// Candidate jets files (candidate-reader.ts): one jets record per event, judged on pt, y, phi
// and mass alone.

import { decodeJetsRecord } from '../formats/jets-codec.js';
import type { CandidateEvent } from './candidate-reader.js';
import { emptyEvent } from './candidate-lines.js';

export async function* jetsFileEvents(records: AsyncGenerator<{ bytes: Uint8Array; offset: number }>): AsyncGenerator<CandidateEvent> {
  for await (const record of records) {
    let decoded;
    try {
      decoded = decodeJetsRecord(record.bytes);
    } catch (error) {
      yield emptyEvent(null, record.offset, `bad jets record: ${(error as Error).message}`);
      continue;
    }
    if (decoded.error !== '') {
      yield emptyEvent(decoded.event, record.offset, `the candidate reports the event invalid: ${decoded.error}`);
      continue;
    }
    // tolerance mode reads pt, y, phi (and mass when given), so an outside implementation
    // may write only those; the record is judged on them alone
    const jets = decoded.jets;
    const count = jets.pt.length;
    const hasMass = jets.mass.length === count;
    if (jets.rapidity.length !== count || jets.phi.length !== count || !(hasMass || jets.mass.length === 0)) {
      const problem = decoded.problem !== '' ? decoded.problem
        : `pt has ${count} values, y ${jets.rapidity.length}, phi ${jets.phi.length}, mass ${jets.mass.length}`;
      yield emptyEvent(decoded.event, record.offset, `inconsistent jets record: ${problem}`);
      continue;
    }
    yield {
      event: decoded.event, offset: record.offset, count, pt: jets.pt, rapidity: jets.rapidity, phi: jets.phi,
      mass: hasMass ? jets.mass : new Float64Array(count), hasMass, error: '',
      ...(jets.trim || jets.softDrop ? {
        groomed: {
          ...(jets.trim ? { trim: { pt: jets.trim.pt, mass: jets.trim.mass } } : {}),
          ...(jets.softDrop ? { softdrop: { pt: jets.softDrop.pt, mass: jets.softDrop.mass } } : {}),
        },
      } : {}),
    };
  }
}
