// The per-event columns `jetlag export` ends every jets CSV row with, named once for the writer
// (output/text-export.ts) and the candidate reader (input/candidate-csv.ts), which skips them:
// cluster_time_ns (the record's time spent clustering the event, 0 when not measured) and
// towers (towers of the event that entered clustering; an empty cell when the jets file does
// not record it), repeated on every row of the event.

export const EVENT_CSV_COLUMNS = ['cluster_time_ns', 'towers'] as const;

/** the header's ending: after the plain, pileup and groomed columns */
export const EVENT_CSV_SUFFIX = `,${EVENT_CSV_COLUMNS.join(',')}`;
