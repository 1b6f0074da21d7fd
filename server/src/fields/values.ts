/**
 * Reading and normalising concept values from located nodes.
 *
 * Numbers: YAML/JSON numbers, and numeric strings ("1e-4", " 0.012 ") read as numbers, because
 * quoting a number is a common habit and the reading programs usually convert. `.nan`, `.inf`,
 * "NaN", "Infinity" and overflowing literals (1e309) are 'not-finite'; booleans, lists and maps
 * where a number is expected are 'wrong-type'; other strings are 'not-a-number'. Step counts and
 * resolution must be integers ('not-an-integer'; 1000.0 is accepted). A resolution may also be a
 * list or a "width,height" string (training scripts split it on the comma): the larger side counts.
 * Booleans: true/false, the YAML 1.1 words yes/no/on/off (any case, also quoted) and 0/1.
 * Null (`key:`, `key: ~`, `null`) means "not set": no value and no problem.
 */
import type { LocatedNode, LocatedScalar } from '../parse/types';
import {
  BETA_SCHEDULE_SPELLINGS,
  KARRAS_ONLY,
  PREDICTION_TARGET_SPELLINGS,
  SAMPLER_SPELLINGS,
  TIMESTEP_SPACING_SPELLINGS,
  UNMODELLED_SAMPLERS,
  type KeyAlias,
} from './aliases';
import type { Concept, ConceptValues } from './concepts';
import { editDistance, inStyleOf, normalizeKeySegment, normalizeValue, suggestionThreshold } from './normalize';

export interface ReadValue {
  concept: Concept;
  value: ConceptValues[Concept];
  /** Why the value differs from what the text literally says. */
  note?: string;
}

/** The value problems fields/ can detect (a subset of setup's ReadProblemKind). */
export type ReadProblemKind = 'not-a-number' | 'not-finite' | 'not-an-integer' | 'wrong-type' | 'unknown-value';

export type ReadResult =
  | { status: 'ok'; values: ReadValue[] }
  | { status: 'problem'; kind: ReadProblemKind; message: string; suggestion?: string }
  | { status: 'unset' }
  | { status: 'skip' };

type ProblemResult = Extract<ReadResult, { status: 'problem' }>;
/** A plain reading before it is attached to a concept. */
export type Plain<T> = { status: 'ok'; value: T } | ProblemResult;

const INTEGER_CONCEPTS = new Set<Concept>(['trainSteps', 'sampleSteps', 'stepsOffset', 'resolution']);
const NUMBER_CONCEPTS = new Set<Concept>([
  'betaStart',
  'betaEnd',
  'guidanceScale',
  'guidanceRescale',
  'offsetNoise',
  'minSnrGamma',
  'sigmaMin',
  'sigmaMax',
  'rho',
  'flowShift',
]);
const BOOLEAN_CONCEPTS = new Set<Concept>(['zeroTerminalSnr', 'thresholding', 'latentSpace', 'karrasSigmas']);

const ENUM_TABLES: Partial<Record<Concept, { table: Record<string, string[]>; noun: string }>> = {
  betaSchedule: { table: BETA_SCHEDULE_SPELLINGS, noun: 'beta schedule' },
  predictionTarget: { table: PREDICTION_TARGET_SPELLINGS, noun: 'prediction target' },
  timestepSpacing: { table: TIMESTEP_SPACING_SPELLINGS, noun: 'timestep spacing' },
  sampler: { table: SAMPLER_SPELLINGS, noun: 'sampler' },
};

export type ValueKind = 'integer' | 'number' | 'boolean' | 'number-list' | 'enum';

export function valueKindOf(concept: Concept): ValueKind {
  if (INTEGER_CONCEPTS.has(concept)) return 'integer';
  if (NUMBER_CONCEPTS.has(concept)) return 'number';
  if (BOOLEAN_CONCEPTS.has(concept)) return 'boolean';
  if (concept === 'betas') return 'number-list';
  return 'enum';
}

/** Reads `node` as the value of `concept`, found under `key` (as written) via `alias`. */
export function readValue(concept: Concept, node: LocatedNode | null, key: string, alias: KeyAlias): ReadResult {
  if (node === null || (node.kind === 'scalar' && node.value === null)) {
    return alias.kind === 'key' ? { status: 'unset' } : { status: 'skip' };
  }
  if (node.kind === 'map') return { status: 'skip' }; // a section, not a value
  const strict = alias.kind === 'key';

  if (concept === 'predictionTarget' && normalizeKeySegment(alias.spelling) === 'vparameterization') {
    const b = readBoolean(node, key);
    if (b.status !== 'ok') return b;
    return ok(concept, b.value ? 'v' : 'epsilon');
  }
  if (concept === 'sampler') return readSampler(node, key, alias);

  const kind = valueKindOf(concept);
  switch (kind) {
    case 'integer':
    case 'number': {
      if (!strict) {
        // Ambiguous numeric keys only count for number literals (`timesteps: 1000`, `shift: 3.0`).
        if (node.kind !== 'scalar' || typeof node.value !== 'number' || !Number.isFinite(node.value)) return { status: 'skip' };
        if (kind === 'integer' && (!Number.isInteger(node.value) || node.value < 1)) return { status: 'skip' };
        return ok(concept, node.value);
      }
      if (concept === 'resolution' && node.kind === 'list') return readResolutionList(node.items, key);
      if (concept === 'resolution' && node.kind === 'scalar' && typeof node.value === 'string') {
        // "768,512": width,height as one string (training scripts split it on the comma).
        const m = /^\s*(\d+)\s*,\s*(\d+)\s*$/.exec(node.value);
        if (m) return ok(concept, Math.max(Number(m[1]), Number(m[2])), `"${node.value.trim()}" is width,height: the larger side counts`);
      }
      const n = readNumber(node, key);
      if (n.status !== 'ok') return n;
      const v = n.value;
      if (kind === 'integer' && !Number.isInteger(v)) {
        return problem('not-an-integer', `${key}: ${describe(node)} is not a whole number`);
      }
      return ok(concept, v);
    }
    case 'boolean': {
      const b = readBoolean(node, key);
      return b.status === 'ok' ? ok(concept, b.value) : b;
    }
    case 'number-list': {
      if (!strict) {
        if (node.kind !== 'list' || node.items.length < 3) return { status: 'skip' };
        const r = readNumberList(node.items, key);
        return r.status === 'ok' ? r : { status: 'skip' };
      }
      if (node.kind !== 'list') return problem('wrong-type', `${key}: expected a list of numbers, found ${describe(node)}`);
      return readNumberList(node.items, key);
    }
    case 'enum':
      return readEnum(concept, node, key, alias);
  }
}

function ok(concept: Concept, value: unknown, note?: string): ReadResult {
  const v: ReadValue = { concept, value: value as ConceptValues[Concept] };
  if (note) v.note = note;
  return { status: 'ok', values: [v] };
}

function problem(kind: ReadProblemKind, message: string, suggestion?: string): ProblemResult {
  return suggestion === undefined ? { status: 'problem', kind, message } : { status: 'problem', kind, message, suggestion };
}

function describe(node: LocatedNode): string {
  if (node.kind === 'map') return 'a map';
  if (node.kind === 'list') return 'a list';
  const raw = node.raw.length > 40 ? `${node.raw.slice(0, 39)}…` : node.raw;
  return raw.replace(/\s+/g, ' ');
}

const NUMERIC_STRING = /^[-+]?(\d+(\.\d*)?|\.\d+)([eE][-+]?\d+)?$/;
const NON_FINITE_STRING = /^[-+]?(\.?inf|infinity|\.?nan)$/i;

export function readNumber(node: LocatedNode, key: string): Plain<number> {
  if (node.kind !== 'scalar') return problem('wrong-type', `${key}: expected a number, found ${describe(node)}`);
  const v = node.value;
  if (typeof v === 'number') {
    if (!Number.isFinite(v)) return problem('not-finite', `${key}: ${describe(node)} is not a finite number`);
    return { status: 'ok', value: v };
  }
  if (typeof v === 'boolean') return problem('wrong-type', `${key}: ${describe(node)} is a boolean, expected a number`);
  if (typeof v === 'string') {
    const s = v.trim();
    if (NUMERIC_STRING.test(s)) {
      const n = Number(s);
      if (!Number.isFinite(n)) return problem('not-finite', `${key}: ${describe(node)} is not a finite number`);
      return { status: 'ok', value: n };
    }
    if (NON_FINITE_STRING.test(s)) return problem('not-finite', `${key}: ${describe(node)} is not a finite number`);
    return problem('not-a-number', `${key}: ${describe(node)} is not a number`);
  }
  return problem('not-a-number', `${key}: ${describe(node)} is not a number`);
}

const TRUE_WORDS = new Set(['true', 'yes', 'on']);
const FALSE_WORDS = new Set(['false', 'no', 'off']);

function readBoolean(node: LocatedNode, key: string): Plain<boolean> {
  if (node.kind !== 'scalar') return problem('wrong-type', `${key}: expected true or false, found ${describe(node)}`);
  const v = node.value;
  if (typeof v === 'boolean') return { status: 'ok', value: v };
  if (typeof v === 'number' && (v === 0 || v === 1)) return { status: 'ok', value: v === 1 };
  if (typeof v === 'string') {
    const s = v.trim().toLowerCase();
    if (TRUE_WORDS.has(s)) return { status: 'ok', value: true };
    if (FALSE_WORDS.has(s)) return { status: 'ok', value: false };
  }
  return problem('wrong-type', `${key}: ${describe(node)} is not true or false`);
}

function readNumberList(items: LocatedNode[], key: string): ReadResult {
  const out: number[] = new Array(items.length);
  for (let i = 0; i < items.length; i++) {
    const r = readNumber(items[i]!, `${key}[${i}]`);
    if (r.status !== 'ok') return r;
    out[i] = r.value;
  }
  return ok('betas', out);
}

function readResolutionList(items: LocatedNode[], key: string): ReadResult {
  // `resolution: [768, 512]` (width, height): the larger side decides the schedule shift.
  if (items.length === 0) return problem('wrong-type', `${key}: expected a number, found an empty list`);
  let max = -Infinity;
  for (let i = 0; i < items.length; i++) {
    const r = readNumber(items[i]!, `${key}[${i}]`);
    if (r.status !== 'ok') return r;
    const v = r.value;
    if (!Number.isInteger(v)) return problem('not-an-integer', `${key}[${i}]: ${describe(items[i]!)} is not a whole number`);
    max = Math.max(max, v);
  }
  return ok('resolution', max);
}

// ---------------------------------------------------------------------------------------------
// Enums

interface SpellingIndex {
  /** normalised spelling -> member */
  lookup: Map<string, string>;
  /** [normalised, as written] for suggestions */
  spellings: [string, string][];
}

const indexCache = new Map<Record<string, string[]>, SpellingIndex>();

function indexOf(table: Record<string, string[]>): SpellingIndex {
  let idx = indexCache.get(table);
  if (!idx) {
    idx = { lookup: new Map(), spellings: [] };
    for (const [member, list] of Object.entries(table)) {
      for (const s of list) {
        const n = normalizeValue(s);
        if (!idx.lookup.has(n)) idx.lookup.set(n, member);
        idx.spellings.push([n, s]);
      }
    }
    indexCache.set(table, idx);
  }
  return idx;
}

/** The closest known spelling (as written in the table), if within the suggestion threshold. */
export function closestSpelling(normalized: string, table: Record<string, string[]>): string | undefined {
  const max = suggestionThreshold(normalized.length);
  let best: string | undefined;
  let bestD = max + 1;
  for (const [n, written] of indexOf(table).spellings) {
    const d = editDistance(normalized, n, max);
    if (d < bestD) {
      bestD = d;
      best = written;
    }
  }
  return bestD <= max ? best : undefined;
}

/** The member an enum spelling names, or undefined. */
export function lookupSpelling(value: string, table: Record<string, string[]>): string | undefined {
  return indexOf(table).lookup.get(normalizeValue(value));
}

function readEnum(concept: Concept, node: LocatedNode, key: string, alias: KeyAlias): ReadResult {
  const spec = ENUM_TABLES[concept]!;
  const strict = alias.kind === 'key';
  if (node.kind !== 'scalar' || typeof node.value !== 'string') {
    if (!strict) return { status: 'skip' };
    return problem('wrong-type', `${key}: expected a ${spec.noun} name, found ${describe(node)}`);
  }
  const written = node.value.trim();
  const n = normalizeValue(written);
  const member = indexOf(spec.table).lookup.get(n);
  if (member !== undefined) {
    if (concept === 'betaSchedule' && n === 'sqrtlinear') {
      return ok(concept, member, '"sqrt_linear" interpolates the betas themselves linearly (recalled from memory), i.e. the linear schedule');
    }
    return ok(concept, member);
  }
  return unknown(node, key, strict, n, written, spec);
}

function unknown(
  node: LocatedScalar,
  key: string,
  strict: boolean,
  normalized: string,
  written: string,
  spec: { table: Record<string, string[]>; noun: string },
): ReadResult {
  const close = normalized.length > 0 ? closestSpelling(normalized, spec.table) : undefined;
  if (!strict && close === undefined) return { status: 'skip' };
  const suggestion = close === undefined ? undefined : inStyleOf(close, written);
  const hint = suggestion === undefined ? '' : ` (did you mean "${suggestion}"?)`;
  return problem('unknown-value', `${key}: ${describe(node)} is not a known ${spec.noun}${hint}`, suggestion);
}

const UNMODELLED = new Set(UNMODELLED_SAMPLERS.map(normalizeValue));
const KARRAS = new Set(KARRAS_ONLY.map(normalizeValue));

function readSampler(node: LocatedNode, key: string, alias: KeyAlias): ReadResult {
  const strict = alias.kind === 'key';
  if (node.kind !== 'scalar' || typeof node.value !== 'string') {
    if (!strict) return { status: 'skip' };
    return problem('wrong-type', `${key}: expected a sampler name, found ${describe(node)}`);
  }
  const written = node.value.trim();
  const last = written.split('.').pop() ?? written;
  const isClass = /(scheduler|sampler)$/i.test(last);
  const isFunction = /^sample_/i.test(last);
  if (alias.kind === 'class-name' && !isClass && !isFunction) return { status: 'skip' };
  let core = last;
  if (isClass) core = core.replace(/(scheduler|sampler)$/i, '');
  if (isFunction) core = core.slice('sample_'.length);
  let n = normalizeValue(core)
    .replace(/discrete/g, '')
    .replace(/gpu$/, '');
  if (KARRAS.has(n)) {
    return alias.kind === 'class-name' ? { status: 'skip' } : ok('karrasSigmas', true);
  }
  let karras = false;
  if (n.endsWith('karras')) {
    karras = true;
    n = n.slice(0, -'karras'.length);
  }
  const member = indexOf(SAMPLER_SPELLINGS).lookup.get(n);
  if (member !== undefined) {
    const values: ReadValue[] = [{ concept: 'sampler', value: member as ConceptValues['sampler'] }];
    if (karras) values.push({ concept: 'karrasSigmas', value: true, note: `"${written}" uses Karras sigmas` });
    return { status: 'ok', values };
  }
  if (UNMODELLED.has(n) || alias.kind === 'class-name') return { status: 'skip' };
  return unknown(node, key, strict, n, written, ENUM_TABLES.sampler!);
}
