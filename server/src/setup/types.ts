import type { LoaderReading } from '../consumers/readAs';
import type { ConsumerDecision, TimestepRule } from '../consumers/types';
import type { Concept, ConceptValues, TimestepSpacing } from '../fields/concepts';
import type { LocatedEntry, LocatedMap, Span } from '../parse/types';

/** Where a concept was found in the located tree. */
export interface FieldSource {
  /** The key as written, e.g. `num_train_timesteps`. */
  key: string;
  /** Dotted path from the document root, e.g. `model.params.timesteps`. List items as `[i]`. */
  path: string;
  entry: LocatedEntry;
  /** The map that holds the entry (used to insert siblings). */
  parent: LocatedMap;
  keySpan: Span;
  /**
   * Span of the value as written: the value node, or the alias text for `key: *name`; for `key:`
   * with no value, an empty span just past the colon.
   */
  valueSpan: Span;
}

export interface ResolvedField<C extends Concept = Concept> {
  concept: C;
  value: ConceptValues[C];
  /** True when the file does not set it and the setup assumed a default. */
  assumed: boolean;
  source: FieldSource | null;
  /**
   * Why the value is what it is when that is not obvious from the text: the basis of an assumed
   * default, or a reading that differs from the literal spelling (e.g. `linear` next to
   * `linear_start` read as scaled_linear). One sentence, for hover and explain output.
   */
  note?: string;
  /**
   * Set when the document does not set the concept and takes it from its paired training file
   * (source is null then, and assumed false): which file, under which key there, and whether
   * that file itself only assumed it.
   */
  inherited?: InheritedOrigin;
}

export interface InheritedOrigin {
  /** The training file as messages name it. */
  from: string;
  /** Dotted key path in that file; absent when that file assumes the value too. */
  key?: string;
  assumedThere: boolean;
}

export type ValueProblemKind = 'not-a-number' | 'not-finite' | 'not-an-integer' | 'wrong-type' | 'unknown-value' | 'duplicate';

/** A value the setup could not use. Rules turn these into findings (unknown-value, schedule-invalid). */
export interface ValueProblem {
  concept: Concept;
  kind: ValueProblemKind;
  source: FieldSource;
  /** One line, e.g. `beta_schedule: "scaled-linaer" is not a known beta schedule`. */
  message: string;
  /** For unknown-value: the closest known spelling in the file's own style, if any. */
  suggestion?: string;
}

/** A key of the consumer's section that the consumer does not take (it has no effect). */
export interface IgnoredKey {
  key: string;
  path: string;
  reason: string;
}

/** How the consuming code reads this document (consumer profile stage), as plain data. */
export interface SetupConsumer {
  decision: ConsumerDecision;
  ignoredKeys: IgnoredKey[];
  /** Scalars the loader reads differently from how they look. */
  loaderReadings: LoaderReading[];
  timesteps: TimestepRule;
  karrasStartsAtMax: boolean;
  /** The consumer has no rescale flag; a zero-SNR fix passes the rescaled betas as its explicit list. */
  rescaleViaBetas: boolean;
  /** The consumer's schedule is a continuous sigma range (Karras et al. 2022), not a list of betas. */
  continuousSigmas?: boolean;
  /** The consumer clamps the last abar to 2^-24 itself when its zero-SNR flag is on. */
  clampsZeroSnrSigma: boolean;
  /** The consumer's own spacing when it takes no spacing key. */
  fixedSpacing?: TimestepSpacing;
  /**
   * Key a fix writes for each concept; null: the consumer cannot take that concept; absent (with
   * `section`): the concept is written the generic way, outside the class's section.
   */
  insertKeys?: { [C in Concept]?: string | null };
  /**
   * The map the class reads when it is nested in a larger config that is otherwise read the
   * generic way (a scheduler instantiated from `_target_`): a fix writes the class's concepts
   * there and every other concept outside it.
   */
  section?: LocatedMap;
  /** The consumer's own spelling of each enum member, per key (`parameterization` -> v -> "v"). */
  enumSpellings?: Record<string, Record<string, string>>;
  /** What to change instead, per concept the consumer cannot take. */
  cannotExpress: { [C in Concept]?: string };
  /** The respacing string whose kept steps are the sampling timesteps (timesteps rule 'respaced'). */
  respacing?: string;
  /** The grid of steps the consumer selects from (timesteps rule 'lcm': original_inference_steps). */
  originalSteps?: number;
  /** Concepts read from a compound value: a fix cannot set them alone. */
  derivedConcepts?: Concept[];
  /** Values a fix may write per concept, where the consumer takes only some. */
  writableValues?: { [C in Concept]?: (string | number | boolean)[] };
  /** The document is a script's argument set: its schedule is the script's, with defaults where a key is absent. */
  scheduleFromCode?: boolean;
  /** Keys the consumer tests by truth value, with the concept value each state stands for. */
  booleanKeys?: Record<string, { whenTrue: string | boolean; whenFalse: string | boolean }>;
}

/** What kind of file this document describes, from the concepts it sets. */
export type ConfigRole = 'training' | 'sampling' | 'both';

export type SetupFields = { [C in Concept]?: ResolvedField<C> };

/** One document's resolved diffusion setup. */
export interface Setup {
  documentIndex: number;
  /** True when the field map recognises the document as a diffusion config. */
  isDiffusionConfig: boolean;
  role: ConfigRole;
  fields: SetupFields;
  /** Concepts whose value was assumed (also marked on each field). */
  assumed: Concept[];
  problems: ValueProblem[];
  /** Span of the whole document, and of the root map when there is one. */
  documentSpan: Span;
  rootMap: LocatedMap | null;
  /**
   * The spelling family the file uses for keys, so that inserted keys match:
   * 'snake' (num_train_timesteps), 'camel' (numTrainTimesteps), 'short' (timesteps, linear_start).
   */
  keyStyle: 'snake' | 'camel' | 'short';
  /**
   * Keys that name a concept but hold null (`trained_betas: null`, `guidance_rescale:`). They count
   * as absent; a fix that sets the concept should fill this key instead of inserting a new one.
   */
  nullKeys?: { [C in Concept]?: FieldSource };
  /** Concepts taken from the paired training file (see setup/inherit.ts), and that file. */
  inherited?: { from: string; concepts: Concept[] };
  /** The consumer profile's reading; absent for setups built without one (tests, old callers). */
  consumer?: SetupConsumer;
}

/** Typed accessor; returns undefined when the concept is neither set nor assumed. */
export function fieldOf<C extends Concept>(setup: Setup, concept: C): ResolvedField<C> | undefined {
  return setup.fields[concept];
}

export function valueOf<C extends Concept>(setup: Setup, concept: C): ConceptValues[C] | undefined {
  return setup.fields[concept]?.value;
}
