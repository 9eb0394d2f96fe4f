// CSV tower rows, field by field (csv-towers.ts has the readings of the spec): the header,
// and scanners over index ranges of a latin1 string that accept ASCII only.

export const CSV_HEADER = 'event,ieta,iphi,et';

const CHAR_0 = 48;
const CHAR_9 = 57;
const CHAR_PLUS = 43;
const CHAR_MINUS = 45;
const CHAR_DOT = 46;
export const CHAR_COMMA = 44;
const CHAR_E = 101;
const CHAR_UPPER_E = 69;

// Text is handled as latin1 (one character per byte), so character positions are byte
// offsets; the field scanners below accept ASCII only, and error texts decode the field as
// UTF-8 again to show it as written.

/** Shows a field in an error text, short and on one line. */
export function quote(latin1: string): string {
  const text = Buffer.from(latin1, 'latin1').toString('utf8');
  return JSON.stringify(text.length > 40 ? `${text.slice(0, 40)}...` : text);
}

/** digits only, at most 2^53 - 1; -1 when not an event number */
export function scanEventNumber(text: string, a: number, b: number): number {
  if (a >= b) return -1;
  let value = 0;
  for (let k = a; k < b; k++) {
    const c = text.charCodeAt(k);
    if (c < CHAR_0 || c > CHAR_9) return -1;
    value = value * 10 + (c - CHAR_0);
    if (value > Number.MAX_SAFE_INTEGER) return -1;
  }
  return value;
}

/** [+-] digits; NaN when not an integer (values beyond 2^53 lose precision: they lie outside every grid anyway) */
export function scanInteger(text: string, a: number, b: number): number {
  let k = a;
  let sign = 1;
  if (k < b) {
    const c = text.charCodeAt(k);
    if (c === CHAR_MINUS) { sign = -1; k++; } else if (c === CHAR_PLUS) k++;
  }
  if (k >= b) return NaN;
  let value = 0;
  for (; k < b; k++) {
    const c = text.charCodeAt(k);
    if (c < CHAR_0 || c > CHAR_9) return NaN;
    value = value * 10 + (c - CHAR_0);
  }
  return sign * value;
}

/** [+-] (digits [. digits*] | . digits) [(e|E) [+-] digits] */
export function isDecimal(text: string, a: number, b: number): boolean {
  let k = a;
  if (k < b) {
    const c = text.charCodeAt(k);
    if (c === CHAR_PLUS || c === CHAR_MINUS) k++;
  }
  let digits = 0;
  while (k < b) { const c = text.charCodeAt(k); if (c < CHAR_0 || c > CHAR_9) break; k++; digits++; }
  if (k < b && text.charCodeAt(k) === CHAR_DOT) {
    k++;
    while (k < b) { const c = text.charCodeAt(k); if (c < CHAR_0 || c > CHAR_9) break; k++; digits++; }
  }
  if (digits === 0) return false;
  if (k < b) {
    const c = text.charCodeAt(k);
    if (c !== CHAR_E && c !== CHAR_UPPER_E) return false;
    k++;
    if (k < b) {
      const s = text.charCodeAt(k);
      if (s === CHAR_PLUS || s === CHAR_MINUS) k++;
    }
    let exponentDigits = 0;
    while (k < b) { const d = text.charCodeAt(k); if (d < CHAR_0 || d > CHAR_9) break; k++; exponentDigits++; }
    if (exponentDigits === 0) return false;
  }
  return k === b;
}

/** The header with spaces or tabs around its names (`event, ieta, iphi, et`) is the header too. */
export function isSpacedHeader(line: string): boolean {
  const names = line.split(',').map((name) => name.trim());
  return names.join(',') === CSV_HEADER;
}
