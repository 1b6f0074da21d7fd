/**
 * Located document -> one typed Setup.
 *
 * Recognition (isDiffusionConfig), in order:
 *  1. a schedule concept set under a specific key (num_train_timesteps, beta_schedule,
 *     prediction_type, trained_betas, rescale_betas_zero_snr, sigma_min, flow_shift, ...), or
 *  2. two different schedule concepts under any keys, at least one of them not a bare number
 *     under a generic key (`timesteps: 1000` + `schedule: cosine` yes; `timesteps: 48` +
 *     `shift: 2` in an animation file no), or
 *  3. one schedule concept under a generic key together with a sampler or a sampling step count,
 *  4. or a sampling step count together with a sampler or a guidance scale.
 * A value with a problem still counts as set (the key is there). Nothing else makes a document a
 * diffusion config, so CI workflows, package manifests and compiler settings are left alone.
 *
 * Role: 'training' when the document sets a training concept (offset noise, min-SNR gamma,
 * resolution) or has a top-level or second-level section named train / training / trainer /
 * finetune; 'sampling' when it sets sampling steps, guidance scale or rescale, or a sampler;
 * 'both' when it has signs of both or of neither.
 *
 * Duplicates: a concept found twice (two sections, or two spellings) keeps the first in document
 * order; a 'duplicate' problem marks the later one when the values differ.
 */
import type { ConsumerReading } from '../consumers/decide';
import { argsHits } from '../consumers/argsReading';
import {
  argsSummary,
  consumerTakes,
  entriesOfSection,
  ignoredKeysOf,
  insertKeysOf,
  originalStepsOf,
  readingDefaults,
  readingHits,
  readingProblems,
  readingSpellings,
} from '../consumers/forSetup';
import type { LoaderReading } from '../consumers/readAs';
import type { Concept, ConceptValues } from '../fields/concepts';
import { findConcepts, type ConceptHit } from '../fields/findConcepts';
import { keySegments, normalizedSegmentOf, normalizeKeySegment } from '../fields/normalize';
import { BETA_SCHEDULE_SPELLINGS, PREDICTION_TARGET_SPELLINGS, TIMESTEP_SPACING_SPELLINGS } from '../fields/aliases';
import { lookupSpelling, valueKindOf } from '../fields/values';
import type { LocatedNode, ParsedDocument } from '../parse/types';
import {
  BETA_SCHEDULE_NOTE,
  DEFAULT_BETA_RANGE,
  DEFAULT_BETA_SCHEDULE,
  DEFAULT_TRAIN_STEPS,
  GUIDANCE_RESCALE_NOTE,
  LATENT_KEY_HINTS,
  OFFSET_NOTE,
  DEFAULT_FLOW_SHIFT,
  DEFAULT_SPACING,
  DEFAULT_STEPS_OFFSET,
  DEFAULT_KARRAS,
  FLOW_SHIFT_NOTE,
  KARRAS_NOTE,
  SHORT_FAMILY_DEFAULT_NOTE,
  SHORT_FAMILY_LINEAR_NOTE,
  SHORT_FAMILY_RANGE,
  SPACING_NOTE,
  TARGET_NOTE_EPSILON,
  TARGET_NOTE_FLOW,
  TRAIN_STEPS_NOTE,
  ZERO_SNR_NOTE,
} from './defaults';
import type { ConfigRole, FieldSource, ResolvedField, Setup, SetupFields, ValueProblem } from './types';
import { withProps } from '../base/objects';

export interface BuildSetupOptions {
  /** Extra key spellings per concept (project file); dotted path suffixes allowed. */
  extraAliases?: Partial<Record<Concept, string[]>>;
  /** Project setting for latentSpace; when absent it is inferred (see inferLatentSpace). */
  latentSpaceDefault?: boolean;
  /** The consumer profile's reading of this document (consumer profile stage). */
  consumer?: ConsumerReading;
  /** Scalars the document's loader reads differently from how they look. */
  loaderReadings?: LoaderReading[];
}

export const SCHEDULE_CONCEPTS: readonly Concept[] = [
  'trainSteps',
  'betaSchedule',
  'betas',
  'betaStart',
  'betaEnd',
  'predictionTarget',
  'timestepSpacing',
  'zeroTerminalSnr',
  'sigmaMin',
  'sigmaMax',
  'flowShift',
];
const TRAINING_CONCEPTS: readonly Concept[] = ['offsetNoise', 'minSnrGamma', 'resolution'];
const SAMPLING_CONCEPTS: readonly Concept[] = ['sampleSteps', 'guidanceScale', 'guidanceRescale', 'sampler'];
const TRAINING_SECTIONS = new Set(['train', 'training', 'trainer', 'finetune', 'finetuning']);

export function buildSetup(doc: ParsedDocument, opts: BuildSetupOptions = {}): Setup {
  const rootMap = doc.root && doc.root.kind === 'map' ? doc.root : null;
  const empty: Setup = {
    documentIndex: doc.index,
    isDiffusionConfig: false,
    role: 'both',
    fields: {},
    assumed: [],
    problems: [],
    documentSpan: { ...doc.span },
    rootMap,
    keyStyle: 'snake',
  };
  try {
    return build(doc, opts, empty);
  } catch {
    // A setup is advisory: an unexpected failure yields "not a diffusion config", never a crash.
    return empty;
  }
}

interface Decided {
  hit: ConceptHit;
  /** signatureOf(hit), computed when a second hit for the concept needs it. */
  signature?: string;
}

/** Keys that stand for one concept in the alias table but are separate settings (clip vs dynamic thresholding). */
const SEPARATE_SETTING_CONCEPTS = new Set<Concept>(['thresholding']);

function build(doc: ParsedDocument, opts: BuildSetupOptions, setup: Setup): Setup {
  const reading = opts.consumer;
  const found =
    readingHits(reading) ?? findConcepts(doc.root, opts.extraAliases).filter((h) => consumerTakes(reading, h.source.entry, h.source.parent));
  // An argument set's own keys (flags, a respacing string), read with the file's T.
  const fileT = found.find((h) => h.concept === 'trainSteps' && h.status === 'ok')?.value as number | undefined;
  const hits = reading?.cls?.args ? [...found, ...argsHits(reading, fileT)] : found;
  const fields: SetupFields = {};
  const problems: ValueProblem[] = [];
  const decided = new Map<Concept, Decided>();
  const nullKeys: NonNullable<Setup['nullKeys']> = {};

  for (const hit of hits) {
    if (hit.status === 'unset') {
      if (!nullKeys[hit.concept]) (nullKeys as Record<string, FieldSource>)[hit.concept] = toSource(hit);
      continue;
    }
    const first = decided.get(hit.concept);
    if (!first) {
      decided.set(hit.concept, { hit });
      if (hit.status === 'ok') {
        setField(fields, hit.concept, hit.value as ConceptValues[Concept], toSource(hit), hit.note);
        // A value the consumer reads one way although it is written unsafely (a flag as a string).
        if (hit.problem) problems.push({ concept: hit.concept, kind: hit.problem.kind, source: toSource(hit), message: hit.problem.message });
      } else if (hit.problem) {
        const p: ValueProblem = { concept: hit.concept, kind: hit.problem.kind, source: toSource(hit), message: hit.problem.message };
        if (hit.problem.suggestion !== undefined) p.suggestion = hit.problem.suggestion;
        problems.push(p);
      }
      continue;
    }
    if (first.hit.source.entry === hit.source.entry) continue;
    const signature = signatureOf(hit);
    if ((first.signature ??= signatureOf(first.hit)) === signature) continue;
    if (SEPARATE_SETTING_CONCEPTS.has(hit.concept) && normalizeKeySegment(hit.source.key) !== normalizeKeySegment(first.hit.source.key)) {
      // Two different settings (clip_sample, thresholding): on when either is on; never a duplicate.
      if (hit.status === 'ok' && hit.value === true && fields[hit.concept]?.value !== true) {
        decided.set(hit.concept, { hit, signature });
        setField(fields, hit.concept, true, toSource(hit), hit.note);
      }
      continue;
    }
    problems.push({
      concept: hit.concept,
      kind: 'duplicate',
      source: toSource(hit),
      message:
        `${hit.source.path} sets ${hit.concept} to ${shown(hit)}, but ${first.hit.source.path} ` +
        `already sets it to ${shown(first.hit)}; the first is used`,
    });
  }

  problems.push(...readingProblems(reading));
  applyShortFamilyReading(fields, decided);
  if (reading?.cls?.valueMeanings) applyValueMeanings(fields, reading.cls.name, reading.cls.valueMeanings);
  if (reading?.cls?.enums) checkClassEnums(fields, problems, reading.cls.name, reading.cls.enums);

  const present = (c: Concept) => decided.has(c);
  const specific = (c: Concept) => {
    const d = decided.get(c);
    return d !== undefined && (d.hit.alias.kind === 'key' || d.hit.extra);
  };
  // A number under a generic key (`timesteps`, `shift`) is the weakest evidence there is.
  const weak = (c: Concept) => !specific(c) && valueKindOf(c) !== 'enum';
  const presentSchedule = SCHEDULE_CONCEPTS.filter(present);
  const scheduleCount = presentSchedule.length;
  const isDiffusionConfig =
    SCHEDULE_CONCEPTS.some(specific) ||
    (scheduleCount >= 2 && presentSchedule.some((c) => !weak(c))) ||
    (scheduleCount >= 1 && (present('sampler') || present('sampleSteps'))) ||
    (present('sampleSteps') && (present('sampler') || present('guidanceScale'))) ||
    // A recognised argument set is a diffusion config even when it sets nothing of the schedule.
    (reading?.cls?.args !== undefined && reading.decision.basis !== 'fallback');

  setup.isDiffusionConfig = isDiffusionConfig;
  setup.role = reading?.role ?? roleOf(doc.root, present);
  setup.fields = fields;
  setup.problems = problems;
  setup.keyStyle = keyStyleOf(hits);
  if (Object.keys(nullKeys).length > 0) setup.nullKeys = nullKeys;
  if (reading) setup.consumer = consumerSummary(reading, opts.loaderReadings ?? []);
  if (isDiffusionConfig) {
    if (reading?.cls || reading?.components) assumeClassDefaults(setup, decided, reading);
    assumeDefaults(setup, decided, doc.root, opts);
  }
  if (setup.consumer) fillCannotExpress(setup.consumer.cannotExpress, setup.fields.sampleSteps?.value);
  return setup;
}

/** The profile's "what to change instead" sentences, with the document's own step count in them. */
function fillCannotExpress(texts: NonNullable<Setup['consumer']>['cannotExpress'], steps: unknown): void {
  const n = typeof steps === 'number' && Number.isInteger(steps) && steps > 0 ? String(steps) : '250';
  for (const [concept, text] of Object.entries(texts) as [Concept, string][]) {
    if (text.includes('{steps}')) texts[concept] = text.replaceAll('{steps}', n);
  }
}

/** A value the consuming class reads differently from the alias table (`linear` in the latent-diffusion code). */
function applyValueMeanings(fields: SetupFields, className: string, meanings: Record<string, Record<string, string>>): void {
  for (const field of Object.values(fields)) {
    if (!field || !field.source) continue;
    const table = meanings[field.source.key];
    const raw = field.source.entry.value;
    if (!table || !raw || raw.kind !== 'scalar' || typeof raw.value !== 'string') continue;
    const member = table[raw.value.trim()];
    if (member === undefined || member === field.value) continue;
    (field as { value: unknown }).value = member;
    field.note = `${className} reads ${field.source.key} "${raw.value.trim()}" as what this tool calls ${member}`;
  }
}

const ENUM_SPELLINGS: Partial<Record<Concept, Record<string, string[]>>> = {
  predictionTarget: PREDICTION_TARGET_SPELLINGS,
  betaSchedule: BETA_SCHEDULE_SPELLINGS,
  timestepSpacing: TIMESTEP_SPACING_SPELLINGS,
};

/**
 * A value the consuming class does not accept (it raises at start-up), even when the alias table
 * knows what it means: an unknown-value problem, with the class's own spelling of the same member
 * as the suggestion. The field keeps its meaning so that independent checks still run.
 */
function checkClassEnums(fields: SetupFields, problems: ValueProblem[], className: string, enums: Record<string, string[]>): void {
  for (const field of Object.values(fields)) {
    if (!field || !field.source) continue;
    const allowed = enums[field.source.key];
    const raw = field.source.entry.value;
    if (!allowed || !raw || raw.kind !== 'scalar' || typeof raw.value !== 'string') continue;
    const written = raw.value.trim();
    if (allowed.includes(written)) continue;
    const table = ENUM_SPELLINGS[field.concept];
    const member = String(field.value);
    const suggestion = table ? allowed.find((a) => lookupSpelling(a, table) === member) : undefined;
    const problem: ValueProblem = {
      concept: field.concept,
      kind: 'unknown-value',
      source: field.source,
      message:
        `${field.source.key}: "${written}" is not accepted by ${className} (it takes ${allowed.join(', ')})` +
        (suggestion ? `; it spells this value "${suggestion}"` : ''),
    };
    if (suggestion) problem.suggestion = suggestion;
    problems.push(problem);
  }
}

/** For each enum key of the class: tool member -> the class's spelling (the first accepted spelling of it). */
function enumSpellingsOf(cls: NonNullable<ConsumerReading['cls']>): Record<string, Record<string, string>> {
  const out: Record<string, Record<string, string>> = {};
  for (const [key, allowed] of Object.entries(cls.enums ?? {})) {
    const concept = (Object.keys(cls.conceptKeys) as Concept[]).find((c) => cls.conceptKeys[c] === key);
    const table = concept ? ENUM_SPELLINGS[concept] : undefined;
    if (!table) continue;
    const byMember: Record<string, string> = {};
    for (const written of allowed) {
      const meaning = cls.valueMeanings?.[key]?.[written] ?? lookupSpelling(written, table);
      if (meaning !== undefined && !(meaning in byMember)) byMember[meaning] = written;
    }
    out[key] = byMember;
  }
  return out;
}

function consumerSummary(reading: ConsumerReading, loaderReadings: LoaderReading[]): NonNullable<Setup['consumer']> {
  const cls = reading.cls;
  const out: NonNullable<Setup['consumer']> = {
    decision: reading.decision,
    ignoredKeys: ignoredKeysOf(reading),
    loaderReadings,
    timesteps: cls?.timesteps ?? 'standard',
    karrasStartsAtMax: cls?.karrasStartsAtMax === true,
    clampsZeroSnrSigma: cls?.clampsZeroSnrSigma === true,
    rescaleViaBetas: cls?.rescaleViaBetas === true,
    cannotExpress: { ...(cls?.cannotExpress ?? {}) },
  };
  if (cls?.fixedSpacing) out.fixedSpacing = cls.fixedSpacing;
  if (cls?.continuousSigmas) out.continuousSigmas = true;
  if (cls?.enums) out.enumSpellings = enumSpellingsOf(cls);
  const spellings = readingSpellings(reading);
  if (spellings) out.enumSpellings = { ...out.enumSpellings, ...spellings };
  if (cls) out.insertKeys = insertKeysOf(cls, reading.outsideGeneric === true);
  if (reading.outsideGeneric && reading.section) out.section = reading.section;
  const originalSteps = originalStepsOf(reading);
  if (originalSteps !== undefined) out.originalSteps = originalSteps;
  return withProps(out, argsSummary(reading));
}

/**
 * The consuming class's own defaults, recorded as assumed with the sentence that names the class
 * (they win over the generic defaults). A setting the class reads from two separate keys (clip
 * and dynamic thresholding) is on when either key, or the default of an absent one, is on.
 */
function assumeClassDefaults(setup: Setup, decided: Map<Concept, Decided>, reading: ConsumerReading): void {
  const cls = reading.cls;
  const fields = setup.fields;
  const fileT = fields.trainSteps && !fields.trainSteps.assumed ? fields.trainSteps.value : undefined;
  for (const d of readingDefaults(reading, fileT)) {
    if (decided.has(d.concept) || fields[d.concept]) continue;
    setField(fields, d.concept, d.value, null, d.note);
    setup.assumed.push(d.concept);
  }
  const section = reading.section;
  if (!cls || !section || !cls.keyDefaults) return;
  const thresholding = fields.thresholding;
  if (thresholding?.value === true) return;
  for (const [key, value] of Object.entries(cls.keyDefaults)) {
    if (value !== true || [...entriesOfSection(section)].some((e) => e.key === key)) continue;
    const note = `${cls.name}'s default for an absent ${key} (${cls.source.split(' (')[0]})`;
    setField(fields, 'thresholding', true, null, note);
    if (!setup.assumed.includes('thresholding')) setup.assumed.push('thresholding');
    return;
  }
}

function toSource(hit: ConceptHit): FieldSource {
  const s = hit.source;
  return { key: s.key, path: s.path, entry: s.entry, parent: s.parent, keySpan: s.keySpan, valueSpan: s.valueSpan };
}

function signatureOf(hit: ConceptHit): string {
  if (hit.status === 'ok') return `ok:${JSON.stringify(hit.value)}`;
  const v = hit.source.entry.value;
  return `raw:${v && v.kind === 'scalar' ? v.raw.trim() : hit.source.path}`;
}

function shown(hit: ConceptHit): string {
  if (hit.status === 'ok') {
    const v = hit.value;
    if (Array.isArray(v)) return `a list of ${v.length} numbers`;
    return typeof v === 'string' ? `"${v}"` : String(v);
  }
  const v = hit.source.entry.value;
  return v && v.kind === 'scalar' ? v.raw.trim() : 'an unreadable value';
}

function setField<C extends Concept>(fields: SetupFields, concept: C, value: ConceptValues[C], source: FieldSource | null, note?: string): void {
  const field: ResolvedField<C> = { concept, value, assumed: source === null, source };
  if (note) field.note = note;
  (fields as Record<string, ResolvedField>)[concept] = field;
}

/** `linear` next to linear_start / linear_end means scaled_linear (see defaults.ts). */
function applyShortFamilyReading(fields: SetupFields, decided: Map<Concept, Decided>): void {
  const schedule = fields.betaSchedule;
  if (!schedule || schedule.assumed || schedule.value !== 'linear' || !schedule.source) return;
  const raw = schedule.source.entry.value;
  if (!raw || raw.kind !== 'scalar' || typeof raw.value !== 'string') return;
  if (normalizeKeySegment(raw.value) !== 'linear') return;
  if (!usesShortRange(decided)) return;
  schedule.value = 'scaled_linear';
  schedule.note = SHORT_FAMILY_LINEAR_NOTE;
}

function usesShortRange(decided: Map<Concept, Decided>): boolean {
  return (['betaStart', 'betaEnd'] as const).some((c) => {
    const d = decided.get(c);
    if (!d) return false;
    const segs = keySegments(d.hit.alias.spelling);
    return segs[segs.length - 1] === 'linearstart' || segs[segs.length - 1] === 'linearend';
  });
}

function roleOf(root: LocatedNode | null, present: (c: Concept) => boolean): ConfigRole {
  let training = TRAINING_CONCEPTS.some(present);
  const sampling = SAMPLING_CONCEPTS.some(present);
  if (!training && root && root.kind === 'map') {
    outer: for (const e of root.entries) {
      if (TRAINING_SECTIONS.has(normalizedSegmentOf(e.key))) {
        training = true;
        break;
      }
      if (e.value && e.value.kind === 'map') {
        for (const e2 of e.value.entries) {
          if (TRAINING_SECTIONS.has(normalizedSegmentOf(e2.key))) {
            training = true;
            break outer;
          }
        }
      }
    }
  }
  if (training && !sampling) return 'training';
  if (sampling && !training) return 'sampling';
  return 'both';
}

function keyStyleOf(hits: ConceptHit[]): Setup['keyStyle'] {
  const counts = { snake: 0, camel: 0, short: 0 };
  for (const h of hits) if (!h.extra) counts[h.keyStyle]++;
  if (counts.camel > counts.snake && counts.camel >= counts.short) return 'camel';
  if (counts.short > counts.snake && counts.short > counts.camel) return 'short';
  return 'snake';
}

// ---------------------------------------------------------------------------------------------
// Defaults

/**
 * Assumed when absent (never when the key is present with a bad value):
 * - trainSteps: the length of an explicit beta list, else 1000.
 * - betaSchedule: linear, unless the file gives a beta list, is a flow-matching setup (flow target,
 *   flow shift or a flow sampler) or a continuous-sigma setup (sigma_min/sigma_max without betas).
 * - betaStart / betaEnd: per family (linear 1e-4 / 0.02, Ho et al. 2020; scaled_linear
 *   0.00085 / 0.012, common practice for latent models, recalled from memory; sigmoid as linear);
 *   none for cosine.
 * - predictionTarget: flow for flow setups, else epsilon.
 * - timestepSpacing leading, stepsOffset 0, zeroTerminalSnr false: not for flow setups.
 * - guidanceRescale 0 only when guidanceScale is set.
 * - latentSpace: the project setting, else inferred (see inferLatentSpace).
 * sampleSteps and guidanceScale are never assumed: their absence means "not a sampling file".
 */
function assumeDefaults(setup: Setup, decided: Map<Concept, Decided>, root: LocatedNode | null, opts: BuildSetupOptions): void {
  const fields = setup.fields;
  const present = (c: Concept) => decided.has(c);
  const assume = <C extends Concept>(concept: C, value: ConceptValues[C], note: string) => {
    if (present(concept) || fields[concept]) return;
    setField(fields, concept, value, null, note);
    setup.assumed.push(concept);
  };

  const isFlow = fields.predictionTarget?.value === 'flow' || present('flowShift') || fields.sampler?.value === 'flow-euler';
  const hasBetaParams = present('betaSchedule') || present('betas') || present('betaStart') || present('betaEnd');
  const isSigma = (present('sigmaMin') || present('sigmaMax') || setup.consumer?.continuousSigmas === true) && !hasBetaParams;

  if (fields.betas && fields.betas.value.length > 0 && !present('trainSteps')) {
    assume('trainSteps', fields.betas.value.length, 'not set: taken from the length of the beta list');
  }
  assume('trainSteps', DEFAULT_TRAIN_STEPS, TRAIN_STEPS_NOTE);

  if (!isFlow && !isSigma && !present('betas')) {
    if (usesShortRange(decided)) {
      // That code family's default schedule is its "linear", i.e. scaled_linear (see defaults.ts).
      assume('betaSchedule', 'scaled_linear', `not set: ${SHORT_FAMILY_DEFAULT_NOTE}`);
    }
    assume('betaSchedule', DEFAULT_BETA_SCHEDULE, BETA_SCHEDULE_NOTE);
    const schedule = fields.betaSchedule;
    if (schedule) {
      const shortFamily =
        schedule.value === 'scaled_linear' && usesShortRange(decided) && (schedule.assumed || schedule.note === SHORT_FAMILY_LINEAR_NOTE);
      const range = shortFamily ? SHORT_FAMILY_RANGE : DEFAULT_BETA_RANGE[schedule.value];
      if (range) {
        const label = shortFamily ? 'this schedule' : `the ${schedule.value} schedule`;
        assume('betaStart', range.start, `not set: assumed ${range.start} for ${label} (${range.basis})`);
        assume('betaEnd', range.end, `not set: assumed ${range.end} for ${label} (${range.basis})`);
      }
    }
  }

  assume('predictionTarget', isFlow ? 'flow' : 'epsilon', isFlow ? TARGET_NOTE_FLOW : TARGET_NOTE_EPSILON);
  // An argument set's script has no spacing or offset setting of its own (its profile derives the steps).
  if (!isFlow && !opts.consumer?.cls?.args) {
    assume('timestepSpacing', DEFAULT_SPACING, SPACING_NOTE);
    assume('stepsOffset', DEFAULT_STEPS_OFFSET, OFFSET_NOTE);
    assume('zeroTerminalSnr', false, ZERO_SNR_NOTE);
  }
  if (fields.guidanceScale && !fields.guidanceScale.assumed) assume('guidanceRescale', 0, GUIDANCE_RESCALE_NOTE);
  if (isFlow) assume('flowShift', DEFAULT_FLOW_SHIFT, FLOW_SHIFT_NOTE);
  if (isSigma) {
    assume('sigmaMin', DEFAULT_KARRAS.sigmaMin, KARRAS_NOTE);
    assume('sigmaMax', DEFAULT_KARRAS.sigmaMax, KARRAS_NOTE);
  }
  if (isSigma || fields.karrasSigmas?.value === true) assume('rho', DEFAULT_KARRAS.rho, KARRAS_NOTE);

  if (!present('latentSpace')) {
    const inferred =
      opts.latentSpaceDefault !== undefined ? { value: opts.latentSpaceDefault, note: 'from the project setting' } : inferLatentSpace(fields, root);
    assume('latentSpace', inferred.value, inferred.note);
  }
}

/**
 * latentSpace when neither the file nor the project says: true for a scaled_linear schedule (the
 * family used by latent models, common practice) or when a key names an autoencoder (a key segment
 * containing vae, latent, autoencoder or first_stage, within four levels); false otherwise.
 */
export function inferLatentSpace(fields: SetupFields, root: LocatedNode | null): { value: boolean; note: string } {
  if (fields.betaSchedule?.value === 'scaled_linear') {
    return { value: true, note: 'inferred: a scaled_linear schedule is the usual choice of latent models' };
  }
  const key = findLatentKey(root);
  if (key) return { value: true, note: `inferred from the key "${key}"` };
  return { value: false, note: 'inferred: no sign of a latent model (autoencoder keys), so pixel space' };
}

function findLatentKey(root: LocatedNode | null): string | null {
  if (!root) return null;
  const stack: { node: LocatedNode; depth: number }[] = [{ node: root, depth: 0 }];
  let budget = 100_000;
  while (stack.length > 0 && budget-- > 0) {
    const { node, depth } = stack.pop()!;
    if (node.kind === 'map') {
      for (const e of node.entries) {
        const seg = normalizedSegmentOf(e.key);
        for (const hint of LATENT_KEY_HINTS) if (seg.includes(hint)) return e.key;
        if (e.value && e.value.kind !== 'scalar' && depth < 3) stack.push({ node: e.value, depth: depth + 1 });
      }
    } else if (node.kind === 'list' && depth < 3) {
      for (const item of node.items) if (item.kind !== 'scalar') stack.push({ node: item, depth: depth + 1 });
    }
  }
  return null;
}
