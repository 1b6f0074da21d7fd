/**
 * What the setup stage needs from a consumer reading: which located keys the consumer takes,
 * which it ignores, the defaults it applies (with the sentence that says so), and the plain-data
 * summary the setup carries on.
 */
import { CONCEPTS, type Concept, type ConceptValues } from '../fields/concepts';
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

/** Keys of the consumer's section the class does not take. */
export function ignoredKeysOf(reading: ConsumerReading): IgnoredKeyInfo[] {
  const { cls, section, family } = reading;
  if (!cls || !section) return [];
  const meta = new Set(metaKeysOf(family));
  const taken = new Set(cls.keys);
  const out: IgnoredKeyInfo[] = [];
  // Config-object classes are called with their params as keyword arguments: an unknown one raises.
  const effect = reading.components ? 'instantiating it raises a TypeError' : 'the key has no effect';
  for (const { entry: e } of effectiveEntries(section)) {
    if (meta.has(e.key) || taken.has(e.key) || e.key === '<<') continue;
    out.push({ key: e.key, path: e.key, reason: `${cls.name} does not take ${e.key}: ${effect}` });
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
export function readingDefaults(reading: ConsumerReading): { concept: Concept; value: ConceptValues[Concept]; note: string }[] {
  if (reading.components) return componentDefaults(reading.components);
  return reading.cls ? classDefaults(reading.cls) : [];
}

/** The consumer's own spellings of values a fix writes, per key, when components spell them (class paths). */
export function readingSpellings(reading: ConsumerReading): Record<string, Record<string, string>> | null {
  return reading.components ? componentSpellings(reading.components) : null;
}

/**
 * True when the consumer reads the entry at `path` (a hit of the concept finder). With a class
 * profile only the section's keys that the class takes count: its own, and those merged into it
 * with `<<` that no own key overrides (the loader hands both to the class). Class-name and
 * metadata keys always count (they name the consumer).
 */
export function consumerTakes(reading: ConsumerReading | undefined, entry: LocatedEntry, parent: LocatedMap): boolean {
  if (!reading || !reading.cls || !reading.section) return true;
  if (parent !== reading.section && !entriesOfSection(reading.section).has(entry)) return false;
  if (metaKeysOf(reading.family).includes(entry.key)) return true;
  return reading.cls.keys.includes(entry.key);
}

function short(source: string): string {
  const i = source.indexOf(' (');
  return i > 0 ? source.slice(0, i) : source;
}

/** The basis of a class default: `DDIMScheduler's default for an absent timestep_spacing (diffusers 0.30, ...)`. */
export function classDefaultNote(cls: ConsumerClass, concept: Concept, _value: unknown): string {
  const key = cls.conceptKeys[concept];
  if (!key) {
    const hint = cls.cannotExpress?.[concept];
    return `${cls.name} has no setting for this (${hint ?? 'it always behaves this way'})`;
  }
  return `${cls.name}'s default for an absent ${key} (${short(cls.source)})`;
}

export function classDefaults(cls: ConsumerClass): { concept: Concept; value: ConceptValues[Concept]; note: string }[] {
  const out: { concept: Concept; value: ConceptValues[Concept]; note: string }[] = [];
  for (const concept of CONCEPTS) {
    let value = cls.defaults[concept];
    if (concept === 'timestepSpacing' && value === undefined && cls.fixedSpacing) value = cls.fixedSpacing;
    if (value === undefined) continue;
    const note =
      concept === 'timestepSpacing' && !cls.conceptKeys.timestepSpacing && cls.fixedSpacing
        ? `${cls.name} takes no timestep_spacing: its own step selection is ${cls.fixedSpacing}-like and starts at T - 1 (${short(cls.source)})`
        : classDefaultNote(cls, concept, value);
    out.push({ concept, value, note });
  }
  return out;
}

/** Key a fix writes for each concept under this class (null: the class cannot take it). */
export function insertKeysOf(cls: ConsumerClass): { [C in Concept]?: string | null } {
  const out: { [C in Concept]?: string | null } = {};
  for (const concept of CONCEPTS) out[concept] = cls.conceptKeys[concept] ?? null;
  return out;
}

export type { LoaderReading };
