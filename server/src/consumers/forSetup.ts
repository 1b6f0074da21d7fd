/**
 * What the setup stage needs from a consumer reading: which located keys the consumer takes,
 * which it ignores, the defaults it applies (with the sentence that says so), and the plain-data
 * summary the setup carries on.
 */
import { CONCEPT_GROUP, CONCEPTS, type Concept, type ConceptValues } from '../fields/concepts';
import { effectiveEntries } from '../fields/findConcepts';
import type { LocatedEntry, LocatedMap } from '../parse/types';
import type { LoaderReading } from './readAs';
import { metaKeysOf, type ConsumerReading } from './decide';
import type { ConsumerClass } from './types';
import type { ConceptHit } from '../fields/findConcepts';
import { componentDefaults, componentHits, componentIgnoredKeys, componentProblems, componentSpellings, type ComponentProblem } from './components';

export interface IgnoredKeyInfo {
  key: string;
  path: string;
  reason: string;
}

/** The maps whose keys the consumer reads as its own (the section, or all flattened sections). */
export function consumerMaps(reading: ConsumerReading): LocatedMap[] {
  if (reading.flatSections) return reading.flatSections;
  return reading.section ? [reading.section] : [];
}

/** Keys of the consumer's section the class does not take. */
export function ignoredKeysOf(reading: ConsumerReading): IgnoredKeyInfo[] {
  const { cls, section, family } = reading;
  if (!cls || !section) return [];
  const meta = new Set(metaKeysOf(family));
  const taken = new Set(cls.keys);
  const out: IgnoredKeyInfo[] = [];
  // Config-object classes, and a class instantiated from a nested map, are called with their keys
  // as keyword arguments: an unknown one raises.
  const effect = reading.components || reading.outsideGeneric ? 'instantiating it raises a TypeError' : 'the key has no effect';
  for (const map of consumerMaps(reading)) {
    const entries = reading.flatSections ? map.entries : effectiveEntries(map).map((x) => x.entry);
    for (const e of entries) {
      if (meta.has(e.key) || taken.has(e.key) || e.key === '<<') continue;
      // A flattened table is only a heading: its keys are the consumer's.
      if (reading.flatSections && map === section && e.value?.kind === 'map') continue;
      out.push({
        key: e.key,
        path: map === section ? e.key : `${sectionName(section, map)}.${e.key}`,
        reason: `${cls.name} does not take ${e.key}: ${effect}`,
      });
    }
  }
  if (reading.components) out.push(...componentIgnoredKeys(reading.components));
  return out;
}

/** The section's entries as its loader sees them: its own, then those merged in with `<<` (memoised per map). */
const sectionEntries = new WeakMap<LocatedMap, Set<LocatedEntry>>();
export function entriesOfSection(section: LocatedMap): Set<LocatedEntry> {
  let set = sectionEntries.get(section);
  if (!set) {
    set = new Set(effectiveEntries(section).map((e) => e.entry));
    sectionEntries.set(section, set);
  }
  return set;
}

/** The concept hits of a document read per component (config-object), or null for other readings. */
export function readingHits(reading: ConsumerReading | undefined): ConceptHit[] | null {
  return reading?.components ? componentHits(reading.components) : null;
}

/** Problems only the consumer sees (config-object: discretizations that disagree). */
export function readingProblems(reading: ConsumerReading | undefined): ComponentProblem[] {
  return reading?.components ? componentProblems(reading.components) : [];
}

/** The consumer's defaults: per component for config-object documents, else the class's own. */
export function readingDefaults(reading: ConsumerReading, trainSteps?: number): { concept: Concept; value: ConceptValues[Concept]; note: string }[] {
  if (reading.components) return componentDefaults(reading.components);
  return reading.cls ? classDefaults(reading.cls, trainSteps) : [];
}

/** The consumer's own spellings of values a fix writes, per key, when components spell them (class paths). */
export function readingSpellings(reading: ConsumerReading): Record<string, Record<string, string>> | null {
  return reading.components ? componentSpellings(reading.components) : null;
}

function sectionName(root: LocatedMap, map: LocatedMap): string {
  return root.entries.find((e) => e.value === map)?.key ?? '';
}

/**
 * True when the consumer reads the entry at `path` (a hit of the concept finder). With a class
 * profile only the section's keys that the class takes count: its own, and those merged into it
 * with `<<` that no own key overrides (the loader hands both to the class). Class-name and
 * metadata keys always count (they name the consumer).
 */
export function consumerTakes(reading: ConsumerReading | undefined, entry: LocatedEntry, parent: LocatedMap): boolean {
  if (!reading || !reading.cls || !reading.section) return true;
  if (!consumerMaps(reading).includes(parent) && !entriesOfSection(reading.section).has(entry)) return reading.outsideGeneric === true;
  if (metaKeysOf(reading.family).includes(entry.key)) return true;
  const args = reading.cls.args;
  if (args) {
    // An argument set: only the keys the profile names stand for concepts, and the keys it reads
    // itself (boolean targets, the respacing string) are read by argsHits.
    if (args.booleanConcepts?.[entry.key] || entry.key === args.respacingKey) return false;
    return Object.values(reading.cls.conceptKeys).includes(entry.key);
  }
  const inert = reading.cls.inertKeys;
  return reading.cls.keys.includes(entry.key) && !(inert && Object.values(inert).includes(entry.key));
}

function short(source: string): string {
  const i = source.indexOf(' (');
  return i > 0 ? source.slice(0, i) : source;
}

/** The basis of a class default: `DDIMScheduler's default for an absent timestep_spacing (diffusers 0.30, ...)`. */
export function classDefaultNote(cls: ConsumerClass, concept: Concept, _value: unknown): string {
  const own = cls.defaultNotes?.[concept];
  if (own) return own;
  const key = cls.conceptKeys[concept];
  if (!key) {
    const hint = cls.cannotExpress?.[concept];
    return `${cls.name} has no setting for this (${hint ?? 'it always behaves this way'})`;
  }
  return `${cls.name}'s default for an absent ${key} (${short(cls.source)})`;
}

export function classDefaults(cls: ConsumerClass, trainSteps?: number): { concept: Concept; value: ConceptValues[Concept]; note: string }[] {
  const out: { concept: Concept; value: ConceptValues[Concept]; note: string }[] = [];
  for (const concept of CONCEPTS) {
    let value = cls.defaults[concept];
    if (concept === 'timestepSpacing' && value === undefined && cls.fixedSpacing) value = cls.fixedSpacing;
    if (value === undefined) continue;
    const note =
      concept === 'timestepSpacing' && !cls.conceptKeys.timestepSpacing && cls.fixedSpacing
        ? cls.timesteps === 'lcm'
          ? `${cls.name} does not read timestep_spacing: it takes every floor(T / original_inference_steps)-th step from the top, ${cls.fixedSpacing}-like (${short(cls.source)})`
          : `${cls.name} takes no timestep_spacing: its own step selection is ${cls.fixedSpacing}-like and starts at T - 1 (${short(cls.source)})`
        : classDefaultNote(cls, concept, value);
    out.push({ concept, value, note });
  }
  const range = cls.args?.linearRangePerStep;
  if (range) {
    // The range follows T: with T taken from the file, or from the class default.
    const T = trainSteps ?? cls.defaults.trainSteps ?? range.referenceSteps;
    const scale = range.referenceSteps / T;
    const why = `${cls.name}: ${range.basis} (T = ${T})`;
    out.push({ concept: 'betaStart', value: range.start * scale, note: why });
    out.push({ concept: 'betaEnd', value: range.end * scale, note: why });
  }
  return out;
}

/**
 * Key a fix writes for each concept under this class (null: the class cannot take it). With
 * `outsideGeneric` (the class reads one nested map of a larger config), a concept the class does
 * not take is left out: it is written the generic way, outside that map (guidance beside the
 * step count, for the pipeline call). A schedule concept it does not take has no key anywhere:
 * only the scheduler reads those, so writing one outside its map would change nothing.
 */
export function insertKeysOf(cls: ConsumerClass, outsideGeneric = false): { [C in Concept]?: string | null } {
  const out: { [C in Concept]?: string | null } = {};
  for (const concept of CONCEPTS) {
    const key = cls.conceptKeys[concept];
    if (key) out[concept] = key;
    else if (!outsideGeneric || CONCEPT_GROUP[concept] === 'schedule') out[concept] = null;
  }
  return out;
}

export type { LoaderReading };

/** What the setup carries on about an argument set's own reading (the respacing, derived and boolean keys). */
export function argsSummary(reading: ConsumerReading): {
  scheduleFromCode?: boolean;
  respacing?: string;
  derivedConcepts?: Concept[];
  writableValues?: { [C in Concept]?: (string | number | boolean)[] };
  booleanKeys?: Record<string, { whenTrue: string | boolean; whenFalse: string | boolean }>;
} {
  const args = reading.cls?.args;
  if (!args) return {};
  const out: ReturnType<typeof argsSummary> = args.scheduleFromBaseModel ? {} : { scheduleFromCode: true };
  if (args.derivedConcepts) out.derivedConcepts = [...args.derivedConcepts];
  if (args.writableValues) out.writableValues = { ...args.writableValues };
  const booleans: Record<string, { whenTrue: string | boolean; whenFalse: string | boolean }> = {};
  for (const [key, b] of Object.entries(args.booleanConcepts ?? {})) booleans[key] = { whenTrue: b.whenTrue, whenFalse: b.whenFalse };
  if (Object.keys(booleans).length > 0) out.booleanKeys = booleans;
  const spec = respacingEntry(reading);
  if (spec && spec.value?.kind === 'scalar' && typeof spec.value.value === 'string' && spec.value.value !== '') out.respacing = spec.value.value;
  if (spec && spec.value?.kind === 'list') {
    const counts = spec.value.items.map((i) => (i.kind === 'scalar' ? i.value : null));
    if (counts.every((c) => typeof c === 'number' && Number.isSafeInteger(c))) out.respacing = counts.join(',');
  }
  return out;
}

function respacingEntry(reading: ConsumerReading): LocatedEntry | null {
  const key = reading.cls?.args?.respacingKey;
  if (!key) return null;
  for (const map of consumerMaps(reading)) {
    const e = map.entries.find((x) => x.key === key);
    if (e) return e;
  }
  return null;
}

/**
 * The grid a latent consistency scheduler selects its sampling steps from (timesteps rule 'lcm'):
 * original_inference_steps as the file writes it (a positive whole number), else the class default.
 */
export function originalStepsOf(reading: ConsumerReading): number | undefined {
  const cls = reading.cls;
  if (cls?.timesteps !== 'lcm') return undefined;
  const fallback = cls.keyDefaults?.original_inference_steps;
  for (const map of consumerMaps(reading)) {
    const e = map.entries.find((x) => x.key === 'original_inference_steps');
    if (!e) continue;
    const v = e.value?.kind === 'scalar' ? e.value.value : null;
    if (typeof v === 'number' && Number.isSafeInteger(v) && v > 0) return v;
  }
  return typeof fallback === 'number' ? fallback : undefined;
}
