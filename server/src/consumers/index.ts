/**
 * The consumer profile stage: located tree -> (which code consumes each document, which loader
 * parses it) -> the setup stage. See docs/consumers.md.
 */
import type { ParsedDocument, ParsedFile, ParseProblem } from '../parse/types';
import { decideConsumer, type ConsumerChoice, type ConsumerReading } from './decide';
import { DIALECTS } from './dialects';
import { readAs, type LoaderReading } from './readAs';

export { decideConsumer, type ConsumerChoice, type ConsumerReading } from './decide';
export { gateFixes } from './gate';
export type { LoaderReading } from './readAs';
export type { ConsumerDecision, FamilyId } from './types';
export { DIALECTS, DIALECT_IDS, type DialectId } from './dialects';
export { FAMILIES, FAMILY_IDS } from './profiles';

export interface DocumentReading {
  reading: ConsumerReading;
  loaderReadings: LoaderReading[];
}

/** Decides the consumer and dialect of a document and re-reads its scalars as that loader does. */
export function readDocument(doc: ParsedDocument, parsed: ParsedFile, path: string, choice?: ConsumerChoice): DocumentReading {
  const reading = decideConsumer(doc, parsed.format, path, choice);
  let loaderReadings: LoaderReading[] = [];
  try {
    loaderReadings = readAs(doc.root, parsed.format, reading.decision.dialect);
  } catch {
    loaderReadings = [];
  }
  return { reading, loaderReadings };
}

/**
 * Parse problems as the file's loader sees them: Python's json accepts NaN and Infinity (no
 * problem) but rejects comments (an error, not a warning).
 */
export function problemsForLoader(problems: readonly ParseProblem[], readings: readonly DocumentReading[]): ParseProblem[] {
  const dialect = readings[0] ? DIALECTS[readings[0].reading.decision.dialect] : null;
  if (!dialect) return [...problems];
  const out: ParseProblem[] = [];
  for (const p of problems) {
    if (p.code === 'json-non-finite' && dialect.acceptsNonFiniteJson && dialect.id !== 'generic') continue;
    if (p.code === 'json-comment' && dialect.jsonCommentsAreErrors) {
      out.push({
        ...p,
        severity: 'error',
        message: `${p.message.replace(/ \(rename.*\)\.?$/, '.')} ${dialect.title.split(' (')[0]} stops at this comment with an error.`,
      });
      continue;
    }
    out.push(p);
  }
  return out;
}
