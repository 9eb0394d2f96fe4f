// Text into HTML: everything that came from an input (labels, producer names, file names,
// engine names, reasons) goes through escapeHtml before it is placed in the page, in element
// content and in quoted attribute values alike. The page carries no script, so escaped text
// is all an input can ever become.

const REPLACEMENTS: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' };

export function escapeHtml(text: unknown): string {
  return String(text).replace(/[&<>"']/g, (character) => REPLACEMENTS[character]);
}

/** A number for a table cell: fixed significant digits, '–' for none. */
export function formatNumber(value: number | null | undefined, digits = 4): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '–';
  if (Number.isInteger(value) && Math.abs(value) < 1e15) return value.toLocaleString('en-US');
  const magnitude = Math.abs(value);
  if (magnitude !== 0 && (magnitude >= 1e6 || magnitude < 1e-3)) return value.toExponential(digits - 1);
  return Number(value.toPrecision(digits)).toString();
}
