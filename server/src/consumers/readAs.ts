/**
 * Re-reads a document's scalars as its loader does. The located tree comes from the generic
 * reading; for another dialect each plain scalar is typed again (in place: the tree belongs to
 * this reading) and every scalar whose loader value differs from the generic one is listed, so
 * that a rule can say what the consumer will really receive.
 */
import type { LocatedNode, LocatedScalar, ScalarValue, SourceFormat, Span } from '../parse/types';
import { DIALECTS, genericDialect, type Dialect, type DialectId, type TypedValue } from './dialects';
import { resolveInterpolations } from './interpolate';

export interface LoaderReading {
  span: Span;
  raw: string;
  /** How the text looks (the generic reading). */
  looks: TypedValue;
  /** What the loader gives the consumer. */
  loaded: TypedValue;
  /** Dotted path of the entry that holds the value. */
  path: string;
  /** An interpolation the loader cannot resolve: why (the value is then read as absent). */
  unresolved?: string;
  /** The value is an interpolation the loader resolves. */
  interpolation?: boolean;
}

function typedOf(value: ScalarValue): TypedValue {
  if (value === null) return { value, kind: 'null' };
  if (typeof value === 'boolean') return { value, kind: 'bool' };
  if (typeof value === 'number') return { value, kind: Number.isInteger(value) ? 'int' : 'float' };
  return { value, kind: 'str' };
}

const MAX_VISITS = 2_000_000;

function sameValue(a: ScalarValue, b: ScalarValue): boolean {
  return a === b || (typeof a === 'number' && typeof b === 'number' && Number.isNaN(a) && Number.isNaN(b));
}

/** Types the document's scalars with `dialectId`; returns the readings that differ from the generic one. */
export function readAs(root: LocatedNode | null, format: SourceFormat, dialectId: DialectId): LoaderReading[] {
  const out: LoaderReading[] = [];
  if (!root || dialectId === 'generic' || format !== 'yaml') return out;
  const dialect: Dialect = DIALECTS[dialectId];
  const seen = new Set<LocatedScalar>();
  const stack: { node: LocatedNode; path: string }[] = [{ node: root, path: '' }];
  let visits = 0;
  while (stack.length > 0 && visits++ < MAX_VISITS) {
    const { node, path } = stack.pop()!;
    if (node.kind === 'map') {
      for (let i = node.entries.length - 1; i >= 0; i--) {
        const e = node.entries[i]!;
        if (e.value) stack.push({ node: e.value, path: path ? `${path}.${e.key}` : e.key });
      }
    } else if (node.kind === 'list') {
      for (let i = node.items.length - 1; i >= 0; i--) stack.push({ node: node.items[i]!, path: `${path}[${i}]` });
    } else if (node.style === 'plain' && !seen.has(node)) {
      seen.add(node);
      const raw = { source: node.raw, style: node.style };
      const looks = genericDialect.typeScalar(raw);
      const loaded = dialect.typeScalar(raw);
      if (looks.kind !== loaded.kind || !sameValue(looks.value, loaded.value)) {
        node.value = loaded.value;
        out.push({ span: { ...node.span }, raw: node.raw, looks, loaded, path });
      }
    }
  }
  if (dialect.interpolates) {
    for (const i of resolveInterpolations(root)) {
      const looks: TypedValue = { value: i.raw, kind: 'str' };
      const reading: LoaderReading = i.resolved
        ? { span: { ...i.scalar.span }, raw: i.scalar.raw, looks, loaded: typedOf(i.resolved.value), path: i.path, interpolation: true }
        : {
            span: { ...i.scalar.span },
            raw: i.scalar.raw,
            looks,
            loaded: { value: null, kind: 'null' },
            path: i.path,
            interpolation: true,
            unresolved: i.problem,
          };
      const at = out.findIndex((r) => r.span.start === reading.span.start);
      if (at >= 0) out.splice(at, 1);
      out.push(reading);
    }
  }
  return out;
}
