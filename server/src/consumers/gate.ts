/**
 * Fixes a consumer can express. A fix that would set a concept the consuming class does not take
 * (inserting a key it rejects or silently ignores) is not offered; the finding says what to change
 * instead (another class, an explicit beta list, a pipeline argument, a training-script flag).
 */
import type { Concept } from '../fields/concepts';

/** The part of a setup the gate reads (the setup stage comes after this one). */
export interface GateSubject {
  fields: { [C in Concept]?: { source: unknown } };
  /** Values present but unusable: a fix may rewrite them in place. */
  problems?: { concept: Concept }[];
  consumer?: {
    decision: { className: string | null };
    insertKeys?: { [C in Concept]?: string | null };
    cannotExpress: { [C in Concept]?: string };
    derivedConcepts?: Concept[];
    writableValues?: { [C in Concept]?: (string | number | boolean)[] };
  };
}

interface EditLike {
  kind: string;
  concept: Concept;
  value?: unknown;
}

interface FixLike {
  edits: EditLike[];
}

export interface GatedFixes<F extends FixLike> {
  fixes: F[];
  /** One sentence per concept that could not be written, for the finding's message. */
  hints: string[];
}

/**
 * A set edit the consumer can take: a key to write it under (or the file already sets it), not a
 * concept derived from a compound value, and a value the consumer accepts for it.
 */
function writable(consumer: NonNullable<GateSubject['consumer']>, e: EditLike, written: (c: Concept) => boolean): boolean {
  if (consumer.insertKeys![e.concept] === null && !written(e.concept)) return false;
  if (consumer.derivedConcepts?.includes(e.concept)) return false;
  const values = consumer.writableValues?.[e.concept];
  return !values || values.includes(e.value as string | number | boolean);
}

export function gateFixes<F extends FixLike>(setup: GateSubject, fixes: readonly F[]): GatedFixes<F> {
  const consumer = setup.consumer;
  if (!consumer?.insertKeys) return { fixes: [...fixes], hints: [] };
  const kept: F[] = [];
  const hints: string[] = [];
  const className = consumer.decision.className ?? 'the consuming code';
  for (const fix of fixes) {
    const written = (c: Concept) => !!setup.fields[c]?.source || !!setup.problems?.some((p) => p.concept === c);
    const blocked = fix.edits.filter((e) => e.kind === 'set' && !writable(consumer, e, written));
    if (blocked.length === 0) {
      kept.push(fix);
      continue;
    }
    for (const e of blocked) {
      const hint = consumer.cannotExpress[e.concept] ?? `${className} has no setting for ${e.concept}`;
      if (!hints.includes(hint)) hints.push(hint);
    }
  }
  return { fixes: kept, hints };
}
