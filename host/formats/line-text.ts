// Free text that comes from a file (an event's error text, a candidate's reason) and is echoed
// into one-line messages and outputs: control characters become \uXXXX escapes, so a file
// cannot break a line, move the cursor or ring the terminal, and the text is capped.
//
// API
//   oneLineText(text, maxChars = 1000): string   unchanged when already printable and short

export const MAX_LINE_TEXT_CHARS = 1000;

// C0 and C1 controls, DEL, and the two Unicode line and paragraph separators
const UNPRINTABLE = /[\u0000-\u001f\u007f-\u009f\u2028\u2029]/g;

export function oneLineText(text: string, maxChars = MAX_LINE_TEXT_CHARS): string {
  const cut = text.length > maxChars ? `${text.slice(0, maxChars)}… (${text.length - maxChars} more characters)` : text;
  return cut.replace(UNPRINTABLE, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`);
}
