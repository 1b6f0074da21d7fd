/**
 * Text from a checked tree (file names, messages that quote values) made safe to print for a
 * person. Control characters would let a file name drive the terminal (an escape sequence, a
 * carriage return that overwrites the line), and bidirectional controls (U+202E and friends)
 * would make `evil\u202Elmay.yaml` read as a different name. Each is shown as a `\uXXXX` escape,
 * so the name stays recognisable and can still be found on disk.
 */

// C0 and C1 controls, DEL, the bidi marks, embeddings, overrides and isolates, and the Unicode
// line and paragraph separators.
const UNPRINTABLE = /[\u0000-\u001f\u007f-\u009f\u061c\u200e\u200f\u2028\u2029\u202a-\u202e\u2066-\u2069]/g;

export function printable(s: string): string {
  return s.replace(UNPRINTABLE, (c) => `\\u${c.charCodeAt(0).toString(16).toUpperCase().padStart(4, '0')}`);
}

/** A message on one line: its own line breaks become spaces, anything else unprintable is escaped. */
export function printableLine(s: string): string {
  return printable(s.replace(/\r\n|\r|\n/g, ' '));
}
