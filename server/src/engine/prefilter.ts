/**
 * A test on the raw text, before any parse: can this file be a diffusion config at all?
 *
 * A document is recognised as one only through a schedule concept or a sampling step count
 * (setup/buildSetup.ts, "Recognition"), and every finding about a file needs that recognition
 * (or, for a file with a syntax error, one of the key names in the engine's CONFIG_KEY_HINT,
 * which are spellings of the same concepts). So a text in which no spelling of those concepts
 * appears, compared the way keys are compared (lower case, separators dropped: every key
 * segment of the alias must appear in the text normalised the same way), cannot produce a
 * finding, and is passed over unread. Texts with a backslash are always read: an escape inside a
 * quoted key can spell a key that the raw text does not show.
 *
 * A flat argument set recognised by its consumer profile (consumers/, family signatures) is a
 * config even when it names no schedule key, so the signature keys of two or more segments count
 * too (those of ten or more letters). The concepts that count must cover every recognition path; test/unit/prefilter.test.ts proves
 * that no fixture or example with findings is passed over.
 */
import type { Concept } from '../fields/concepts';
import { KEY_ALIASES } from '../fields/aliases';
import { keySegments } from '../fields/normalize';
import { SCHEDULE_CONCEPTS } from '../setup';
import { FAMILIES } from '../consumers';
import { detectLineEnding, formatFromPath, hasBom, type ParsedFile } from '../parse';
import type { FileReading } from './types';

/** Concepts whose spellings let a text through. */
export const PREFILTER_CONCEPTS: readonly Concept[] = [...SCHEDULE_CONCEPTS, 'sampleSteps', 'stepsOffset'];

type Needles = readonly (readonly string[])[];

function needlesFor(extra?: Partial<Record<Concept, readonly string[]>>): Needles {
  const seen = new Set<string>();
  const out: string[][] = [];
  for (const concept of PREFILTER_CONCEPTS) {
    const spellings = [...KEY_ALIASES[concept].map((a) => a.spelling), ...(extra?.[concept] ?? [])];
    for (const spelling of spellings) {
      if (typeof spelling !== 'string') continue;
      const segs = keySegments(spelling);
      const id = segs.join('.');
      // An alias that normalises to nothing could match any key: nothing may be passed over.
      if (segs.length === 0) return [[]];
      if (seen.has(id)) continue;
      seen.add(id);
      out.push(segs);
    }
  }
  // A consumer family whose documents name no concept key (a config-object file that relies on
  // its classes' defaults) is recognised by its sub-config keys.
  for (const family of FAMILIES) {
    for (const hint of family.textHints ?? []) {
      const segs = keySegments(hint);
      const id = segs.join('.');
      if (segs.length === 0 || seen.has(id)) continue;
      seen.add(id);
      out.push(segs);
    }
  }
  // A recognised argument set is a config whatever it sets: its distinctive keys of ten or more
  // letters let it through (short words such as `v2` or `sdpa` would let nearly every text through).
  for (const family of FAMILIES) {
    for (const key of [...(family.signature ?? []), ...family.classes.flatMap((c) => c.signature ?? [])]) {
      const segs = keySegments(key);
      const id = segs.join('.');
      if (id.length < 10 || seen.has(id)) continue;
      seen.add(id);
      out.push(segs);
    }
  }
  // Shorter needles first: the common spellings are found sooner.
  return out.sort((a, b) => a.join('').length - b.join('').length);
}

const builtinNeedles = needlesFor(undefined);

/** The built-in needles: each a list of normalised key segments that must all appear (for tests). */
export function builtinPrefilterNeedles(): Needles {
  return builtinNeedles;
}
const extraCache = new WeakMap<object, Needles>();

/** Lower case with every character but a-z and 0-9 dropped: the key normalisation, over a text. */
export function normalizedText(text: string): string {
  return text.toLowerCase().replace(/[^a-z0-9]+/g, '');
}

/**
 * False when the text cannot hold a diffusion config: none of the recognising concepts' key
 * spellings (built-in or the project's extra aliases) appears in it. True otherwise.
 */
export function mayBeDiffusionConfig(text: string, extraAliases?: Partial<Record<Concept, readonly string[]>>): boolean {
  if (text.indexOf('\\') !== -1) return true;
  let needles = builtinNeedles;
  if (extraAliases && Object.values(extraAliases).some((v) => Array.isArray(v) && v.length > 0)) {
    needles = extraCache.get(extraAliases) ?? needlesFor(extraAliases);
    extraCache.set(extraAliases, needles);
  }
  const flat = normalizedText(text);
  // A config usually shows one of the first (shortest, commonest) needles: those are searched
  // directly; the trigram set pays off for the long tail a text without any needle goes through.
  let present: Uint32Array | null = null;
  for (let n = 0; n < needles.length; n++) {
    const segs = needles[n]!;
    if (n === DIRECT_NEEDLES) present = trigramsOf(flat);
    let all = true;
    for (const seg of segs) {
      if ((present !== null && !mayContain(present, seg)) || flat.indexOf(seg) === -1) {
        all = false;
        break;
      }
    }
    if (all) return true;
  }
  return false;
}

/**
 * Every three-character run of a normalised text, hashed into a bit set: a needle with a run the
 * set lacks cannot be in the text, so most needles are ruled out without a search of the text
 * (a hash collision only sends a needle on to the search; no needle that is there is ever missed).
 */
const TRIGRAM_BITS = 1 << 14;
/** Needles searched before the trigram set is built. */
const DIRECT_NEEDLES = 12;
const trigramSet = new Uint32Array(TRIGRAM_BITS / 32);

function trigramHash(s: string, i: number): number {
  return ((s.charCodeAt(i) * 1031 + s.charCodeAt(i + 1)) * 1031 + s.charCodeAt(i + 2)) & (TRIGRAM_BITS - 1);
}

function trigramsOf(flat: string): Uint32Array {
  trigramSet.fill(0);
  for (let i = 0; i + 2 < flat.length; i++) {
    const h = trigramHash(flat, i);
    trigramSet[h >>> 5]! |= 1 << (h & 31);
  }
  return trigramSet;
}

function mayContain(present: Uint32Array, seg: string): boolean {
  for (let i = 0; i + 2 < seg.length; i++) {
    const h = trigramHash(seg, i);
    if ((present[h >>> 5]! & (1 << (h & 31))) === 0) return false;
  }
  return true;
}

/**
 * The reading of a file the pre-filter passed over: no documents, nothing parsed. What pairing
 * and the session learn from it (role 'none', no partner documents) is what a parse would have
 * told them, since such a text holds no diffusion config.
 */
export function passedOverReading(path: string, text: string): FileReading {
  const parsed: ParsedFile = {
    format: formatFromPath(path) ?? 'yaml',
    text,
    documents: [],
    problems: [],
    lineEnding: detectLineEnding(text),
    bom: hasBom(text),
    suppressions: [],
    comments: [],
  };
  return { path, parsed, documents: [], isDiffusionConfig: false, inheritance: null };
}
