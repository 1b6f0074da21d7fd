/**
 * Finds concepts anywhere in a located tree through the alias table.
 *
 * The walk is iterative and in document order (pre-order), so "first found" means "first in the
 * file". YAML merge keys (`<<: *base`) are followed: merged entries count as entries of the map,
 * after its own entries, and an own entry hides a merged one with the same key. Keys that match
 * no alias are ignored.
 */
import type { LocatedEntry, LocatedMap, LocatedNode, Span } from '../parse/types';
import { CONCEPTS, type Concept, type ConceptValues } from './concepts';
import { FOREIGN_SECTION, KEY_ALIASES, type KeyAlias } from './aliases';
import { isCamelCase, keySegments, keySegmentsOf, normalizedKeyOf, type KeySpellingStyle } from './normalize';
import { readValue, type ReadProblemKind } from './values';

/** Where a concept was found (structurally the same as setup's FieldSource). */
export interface HitSource {
  key: string;
  path: string;
  entry: LocatedEntry;
  parent: LocatedMap;
  keySpan: Span;
  valueSpan: Span;
}

export interface ConceptHit {
  concept: Concept;
  source: HitSource;
  /** The alias that matched (user aliases from the project file have kind 'key'). */
  alias: KeyAlias;
  /** True when the alias came from `extraAliases`. */
  extra: boolean;
  /** Spelling family of the key as written. */
  keyStyle: KeySpellingStyle;
  /** 'unset': the key is present with a null value (treated as absent). */
  status: 'ok' | 'problem' | 'unset';
  value?: ConceptValues[Concept];
  note?: string;
  problem?: { kind: ReadProblemKind; message: string; suggestion?: string };
}

interface Candidate {
  concept: Concept;
  alias: KeyAlias;
  segs: string[];
  extra: boolean;
}

const KIND_ORDER = { key: 0, ambiguous: 1, 'class-name': 2 } as const;

/** Upper bound on visited nodes (alias-shared subtrees may be visited more than once). */
const MAX_WALK_STEPS = 5_000_000;
/** Merge keys may chain (`<<` inside a merged map); follow at most this many levels. */
const MAX_MERGE_DEPTH = 8;

const builtinIndex = buildIndex(undefined);

function buildIndex(extra: Partial<Record<Concept, string[]>> | undefined): Map<string, Candidate[]> {
  const index = new Map<string, Candidate[]>();
  const add = (c: Candidate) => {
    if (c.segs.length === 0) return;
    const last = c.segs[c.segs.length - 1]!;
    const list = index.get(last) ?? [];
    list.push(c);
    index.set(last, list);
  };
  if (extra) {
    for (const concept of CONCEPTS) {
      for (const spelling of extra[concept] ?? []) {
        if (typeof spelling !== 'string') continue;
        add({ concept, alias: { spelling, kind: 'key', style: 'snake' }, segs: keySegments(spelling), extra: true });
      }
    }
  }
  for (const concept of CONCEPTS) {
    for (const alias of KEY_ALIASES[concept]) add({ concept, alias, segs: keySegments(alias.spelling), extra: false });
  }
  for (const list of index.values()) {
    list.sort((a, b) => Number(b.extra) - Number(a.extra) || b.segs.length - a.segs.length || KIND_ORDER[a.alias.kind] - KIND_ORDER[b.alias.kind]);
  }
  return index;
}

function endsWith(path: readonly string[], suffix: readonly string[]): boolean {
  if (suffix.length > path.length) return false;
  const off = path.length - suffix.length;
  for (let i = 0; i < suffix.length; i++) if (path[off + i] !== suffix[i]) return false;
  return true;
}

interface EffectiveEntry {
  entry: LocatedEntry;
  parent: LocatedMap;
}

/** The map's own entries, then entries merged in with `<<` that no own entry overrides. */
export function effectiveEntries(map: LocatedMap): EffectiveEntry[] {
  const out: EffectiveEntry[] = [];
  const seen = new Set<string>();
  const visit = (m: LocatedMap, depth: number, visited: Set<LocatedMap>) => {
    if (visited.has(m)) return;
    visited.add(m);
    const merges: LocatedNode[] = [];
    for (const entry of m.entries) {
      if (entry.key === '<<') {
        if (entry.value) merges.push(entry.value);
        continue;
      }
      const k = normalizedKeyOf(entry.key);
      if (seen.has(k)) continue;
      seen.add(k);
      out.push({ entry, parent: m });
    }
    if (depth >= MAX_MERGE_DEPTH) return;
    for (const node of merges) {
      const targets = node.kind === 'map' ? [node] : node.kind === 'list' ? node.items : [];
      for (const t of targets) if (t.kind === 'map') visit(t, depth + 1, visited);
    }
  };
  visit(map, 0, new Set());
  return out;
}

interface MapFrame {
  kind: 'map';
  entries: readonly LocatedEntry[];
  /** The map each entry belongs to; null when all belong to `map` (no merge keys). */
  parents: readonly LocatedMap[] | null;
  map: LocatedMap;
  i: number;
  segs: readonly string[];
  path: string;
  foreign: boolean;
}
interface ListFrame {
  kind: 'list';
  items: LocatedNode[];
  i: number;
  segs: readonly string[];
  path: string;
  foreign: boolean;
}

export function findConcepts(root: LocatedNode | null, extraAliases?: Partial<Record<Concept, string[]>>): ConceptHit[] {
  const hits: ConceptHit[] = [];
  if (!root || root.kind === 'scalar') return hits;
  const hasExtra = extraAliases && Object.values(extraAliases).some((v) => Array.isArray(v) && v.length > 0);
  const index = hasExtra ? buildIndex(extraAliases) : builtinIndex;

  const stack: (MapFrame | ListFrame)[] = [frameFor(root, NO_SEGMENTS, '', false)];
  let steps = 0;
  while (stack.length > 0 && steps < MAX_WALK_STEPS) {
    const top = stack[stack.length - 1]!;
    steps++;
    if (top.kind === 'list') {
      if (top.i >= top.items.length) {
        stack.pop();
        continue;
      }
      const i = top.i++;
      const item = top.items[i]!;
      if (item.kind !== 'scalar') stack.push(frameFor(item, top.segs, `${top.path}[${i}]`, top.foreign));
      continue;
    }
    if (top.i >= top.entries.length) {
      stack.pop();
      continue;
    }
    const entry = top.entries[top.i]!;
    const parent = top.parents ? top.parents[top.i]! : top.map;
    top.i++;
    // The common case, a key that names no concept and holds a scalar, allocates nothing.
    const ownSegs = keySegmentsOf(entry.key);
    const value = entry.value;
    const last = ownSegs.length > 0 ? ownSegs[ownSegs.length - 1] : top.segs[top.segs.length - 1];
    const candidates = last === undefined ? undefined : index.get(last);
    const isCollection = value !== null && value.kind !== 'scalar';
    if (!candidates && !isCollection) continue;
    const segs = ownSegs.length > 0 ? top.segs.concat(ownSegs) : top.segs;
    const path = top.path === '' ? entry.key : `${top.path}.${entry.key}`;
    const matched = candidates !== undefined && matchEntry(candidates, segs, entry, parent, path, top.foreign, hits);
    if (!matched && isCollection) {
      const foreign = top.foreign || ownSegs.some((s) => FOREIGN_SECTION.test(s));
      stack.push(frameFor(value, segs, path, foreign));
    }
  }
  return hits;
}

const NO_SEGMENTS: readonly string[] = [];

function frameFor(node: LocatedNode, segs: readonly string[], path: string, foreign: boolean): MapFrame | ListFrame {
  if (node.kind === 'map') {
    if (ownEntriesSuffice(node)) return { kind: 'map', entries: node.entries, parents: null, map: node, i: 0, segs, path, foreign };
    const effective = effectiveEntries(node);
    return { kind: 'map', entries: effective.map((e) => e.entry), parents: effective.map((e) => e.parent), map: node, i: 0, segs, path, foreign };
  }
  if (node.kind === 'list') return { kind: 'list', items: node.items, i: 0, segs, path, foreign };
  return { kind: 'list', items: [], i: 0, segs, path, foreign };
}

/**
 * True when effectiveEntries(map) would be the map's own entries in order: no merge key and no
 * two keys that compare equal. Checked without allocating for ordinary maps.
 */
function ownEntriesSuffice(map: LocatedMap): boolean {
  const entries = map.entries;
  const n = entries.length;
  for (let i = 0; i < n; i++) if (entries[i]!.key === '<<') return false;
  if (n <= 16) {
    for (let i = 1; i < n; i++) {
      const k = normalizedKeyOf(entries[i]!.key);
      for (let j = 0; j < i; j++) if (normalizedKeyOf(entries[j]!.key) === k) return false;
    }
    return true;
  }
  const seen = new Set<string>();
  for (const e of entries) {
    const k = normalizedKeyOf(e.key);
    if (seen.has(k)) return false;
    seen.add(k);
  }
  return true;
}

/** The last dotted segment of a key as written (the key itself when it has no dot). */
function lastSegmentOf(key: string): string {
  const dot = key.lastIndexOf('.');
  return dot < 0 ? key : key.slice(dot + 1);
}

function matchEntry(
  candidates: readonly Candidate[],
  segs: readonly string[],
  entry: LocatedEntry,
  parent: LocatedMap,
  path: string,
  foreign: boolean,
  hits: ConceptHit[],
): boolean {
  for (const c of candidates) {
    if (!endsWith(segs, c.segs)) continue;
    if (foreign && c.alias.kind !== 'key') continue;
    const result = readValue(c.concept, entry.value, entry.key, c.alias);
    if (result.status === 'skip') continue;
    const source: HitSource = {
      key: entry.key,
      path,
      entry,
      parent,
      keySpan: entry.keySpan,
      valueSpan: entry.aliasSpan ?? entry.value?.span ?? { start: entry.span.end, end: entry.span.end },
    };
    const keyStyle: KeySpellingStyle = isCamelCase(lastSegmentOf(entry.key)) ? 'camel' : c.alias.style;
    if (result.status === 'ok') {
      for (const v of result.values) {
        const hit: ConceptHit = { concept: v.concept, source, alias: c.alias, extra: c.extra, keyStyle, status: 'ok', value: v.value };
        if (v.note) hit.note = v.note;
        hits.push(hit);
      }
    } else if (result.status === 'problem') {
      const problem: ConceptHit['problem'] = { kind: result.kind, message: result.message };
      if (result.suggestion !== undefined) problem.suggestion = result.suggestion;
      hits.push({ concept: c.concept, source, alias: c.alias, extra: c.extra, keyStyle, status: 'problem', problem });
    } else {
      hits.push({ concept: c.concept, source, alias: c.alias, extra: c.extra, keyStyle, status: 'unset' });
    }
    return true;
  }
  return false;
}
