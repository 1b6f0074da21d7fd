/** Which concept's key or value sits at a text offset (hover and friends). */
import type { FileReading, DocumentResult } from '../engine/api';
import type { Concept } from '../fields/concepts';
import type { FieldSource } from '../setup/types';
import type { Span } from '../parse/types';

export interface FieldAtOffset {
  document: DocumentResult;
  concept: Concept;
  source: FieldSource;
  /** Key start to value end. */
  span: Span;
}

function contains(span: Span, offset: number): boolean {
  return offset >= span.start && offset <= span.end;
}

/** The innermost concept field whose key or value covers `offset`, if any. */
export function fieldAtOffset(file: FileReading, offset: number): FieldAtOffset | null {
  let best: FieldAtOffset | null = null;
  for (const document of file.documents) {
    if (!contains(document.setup.documentSpan, offset)) continue;
    for (const [concept, field] of Object.entries(document.setup.fields)) {
      const source = field?.source;
      if (!source) continue;
      const span = { start: source.keySpan.start, end: Math.max(source.valueSpan.end, source.keySpan.end) };
      if (!contains(source.keySpan, offset) && !contains(source.valueSpan, offset)) continue;
      if (!best || span.end - span.start < best.span.end - best.span.start) {
        best = { document, concept: concept as Concept, source, span };
      }
    }
  }
  return best;
}

/** The first field (by position) among `concepts` in the file's diffusion documents. */
export function firstFieldOf(file: FileReading, concepts: readonly Concept[]): FieldAtOffset | null {
  let best: FieldAtOffset | null = null;
  for (const document of file.documents) {
    if (!document.setup.isDiffusionConfig) continue;
    for (const concept of concepts) {
      const source = document.setup.fields[concept]?.source;
      if (!source) continue;
      const span = { start: source.keySpan.start, end: Math.max(source.valueSpan.end, source.keySpan.end) };
      if (!best || span.start < best.span.start) best = { document, concept, source, span };
    }
  }
  return best;
}
