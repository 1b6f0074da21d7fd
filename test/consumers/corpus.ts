/**
 * Consumer corpora: test/consumers/corpus/<family>/clean/* must give no error or warning;
 * test/consumers/corpus/<family>/flawed/<name>.<ext> has <name>.expected.json with its exact
 * findings and fixes. After each fix the text is read back as its loader and consumer read it:
 * the consumer section changes exactly by the expected keys, and no key the consumer does not
 * take is added.
 */
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { extname, join } from 'node:path';
import { readFile, analyzeText } from '../../server/src/engine/api';
import type { Finding } from '../../server/src/base/findings';
import { decideConsumer, type ConsumerChoice } from '../../server/src/consumers/decide';
import { readAs } from '../../server/src/consumers/readAs';
import { metaKeysOf } from '../../server/src/consumers/decide';
import type { ComponentReading } from '../../server/src/consumers/components';
import { applyEdits } from '../../server/src/fix';
import type { LocatedMap, LocatedNode, ScalarValue } from '../../server/src/parse/types';

export const CORPUS_ROOT = join(__dirname, 'corpus');
const INPUT = /\.(json|jsonc|yaml|yml|toml)$/;
const SIDE = /\.(expected\.json|after-\d+\.[a-z]+)$/;

export interface ExpectedFix {
  title: string;
  /** Keys of the consumer section the fix changes, with the value the loader reads afterwards (null: removed). */
  changes: Record<string, ScalarValue | ScalarValue[] | { length: number; first: ScalarValue; last: ScalarValue }>;
}

export interface ExpectedFinding {
  rule: string;
  severity: 'error' | 'warning' | 'info' | 'hint';
  /** Exact flagged text. */
  text: string;
  /** Substrings the message must contain (numbers with their source in `sources`). */
  message: string[];
  fixes: ExpectedFix[];
}

export interface Expectation {
  about: string;
  /** Family, class and dialect the decision must name. */
  decision: { family: string; className: string | null; dialect: string };
  findings: ExpectedFinding[];
  /** Where each number the messages must contain comes from. */
  sources?: Record<string, string>;
}

export interface CorpusFile {
  family: string;
  kind: 'clean' | 'flawed';
  name: string;
  path: string;
  text: string;
}

export function corpusFiles(): CorpusFile[] {
  const out: CorpusFile[] = [];
  if (!existsSync(CORPUS_ROOT)) return out;
  for (const family of readdirSync(CORPUS_ROOT).sort()) {
    for (const kind of ['clean', 'flawed'] as const) {
      const dir = join(CORPUS_ROOT, family, kind);
      if (!existsSync(dir)) continue;
      for (const name of readdirSync(dir).sort()) {
        if (!INPUT.test(name) || SIDE.test(name)) continue;
        const path = join(dir, name);
        out.push({ family, kind, name, path, text: readFileSync(path, 'utf8') });
      }
    }
  }
  return out;
}

export function expectationOf(file: CorpusFile): Expectation | null {
  const p = file.path.replace(/\.[a-z]+$/, '.expected.json');
  return existsSync(p) ? (JSON.parse(readFileSync(p, 'utf8')) as Expectation) : null;
}

/** A node as its loader hands it to the consumer (after the dialect's typing). */
export function plain(node: LocatedNode | null): unknown {
  if (!node) return null;
  if (node.kind === 'scalar') return node.value;
  if (node.kind === 'list') return node.items.map(plain);
  const out: Record<string, unknown> = {};
  for (const e of node.entries) out[e.key] = plain(e.value);
  return out;
}

/** The consumer's section of the first document, read as its loader reads it. */
export function loadSection(text: string, path: string, choice?: ConsumerChoice): { values: Record<string, unknown>; accepted: Set<string> | null } {
  const read = readFile(text, { path });
  const doc = read.parsed.documents[0]!;
  const reading = decideConsumer(doc, read.parsed.format, path, choice);
  readAs(doc.root, read.parsed.format, reading.decision.dialect);
  if (reading.components) return componentSection(reading.components);
  if (reading.outsideGeneric && reading.section && doc.root?.kind === 'map') return nestedClassSection(doc.root, reading.section, reading);
  const section = reading.section ?? (doc.root && doc.root.kind === 'map' ? doc.root : null);
  let values = (section ? plain(section) : {}) as Record<string, unknown>;
  if (reading.flatSections) {
    // The loader merges the first-level tables into one namespace (sd-scripts read_config_from_file).
    values = {};
    for (const map of reading.flatSections) {
      for (const e of map.entries) if (!(map === section && e.value?.kind === 'map')) values[e.key] = plain(e.value);
    }
  }
  const accepted = reading.cls ? new Set([...reading.cls.keys, ...metaKeysOf(reading.family)]) : null;
  return { values, accepted };
}

/**
 * A class nested in a larger config (a scheduler instantiated from `_target_`): its own map as the
 * class receives it (keys as written), and every other leaf of the document by its dotted path,
 * read the generic way; accepted are the class's keys and every key outside its map.
 */
function nestedClassSection(
  root: LocatedMap,
  section: LocatedMap,
  reading: ReturnType<typeof decideConsumer>,
): { values: Record<string, unknown>; accepted: Set<string> } {
  const values: Record<string, unknown> = {};
  const accepted = new Set<string>([...(reading.cls?.keys ?? []), ...metaKeysOf(reading.family)]);
  for (const e of section.entries) values[e.key] = plain(e.value);
  const walk = (map: LocatedMap, prefix: string) => {
    for (const e of map.entries) {
      if (e.value === section) continue;
      const path = prefix ? `${prefix}.${e.key}` : e.key;
      if (e.value?.kind === 'map') walk(e.value, path);
      else {
        values[path] = plain(e.value);
        accepted.add(path);
      }
    }
  };
  walk(root, '');
  return { values, accepted };
}

/**
 * A config-object document as its classes receive it: each component's class path
 * (`<path>.target`) and each of its keyword arguments (`<path>.params.<key>`), sub-configs
 * excepted; accepted are the keys each known class takes.
 */
function componentSection(components: readonly ComponentReading[]): { values: Record<string, unknown>; accepted: Set<string> } {
  const values: Record<string, unknown> = {};
  const accepted = new Set<string>();
  for (const c of components) {
    values[`${c.path}.target`] = c.className;
    accepted.add(`${c.path}.target`);
    for (const e of c.params?.entries ?? []) {
      const isSubConfig = e.value?.kind === 'map' && e.value.entries.some((x) => x.key === 'target');
      if (!isSubConfig) values[`${c.path}.params.${e.key}`] = plain(e.value);
    }
    for (const k of c.cls?.keys ?? []) accepted.add(`${c.path}.params.${k}`);
    if (!c.cls) for (const e of c.params?.entries ?? []) accepted.add(`${c.path}.params.${e.key}`);
  }
  return { values, accepted };
}

export function findingsOf(file: CorpusFile): Finding[] {
  return analyzeText(file.text, { path: file.path }).findings;
}

export function applyFix(text: string, finding: Finding, index: number): string {
  return applyEdits(text, finding.fixes[index]!.edits);
}

export function extOf(path: string): string {
  return extname(path);
}
