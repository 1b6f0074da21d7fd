/**
 * A sampling document paired with a training file takes from it what it does not set itself:
 * the number of training steps T, the beta schedule (family and range) or the explicit beta
 * list, the zero-terminal-SNR rescale, the prediction target and whether the model works on
 * latents. The model was trained with those; a sampler that is not told otherwise must use them,
 * so reading the sampling file with a default schedule instead would analyse a run that does not
 * exist.
 *
 * The inherited values are plain data (ScheduleInheritance) so that a reading can be repeated
 * without the partner's tree. Each inherited field keeps its origin: no source in this document,
 * not assumed, and `inherited` naming the training file and its key. Rules and views say
 * "from training file X" wherever they would say "assumed".
 */
import type { Concept, ConceptValues } from '../fields/concepts';
import type { ResolvedField, Setup, SetupFields } from './types';
import { copyOf, withProps } from '../base/objects';

/** What a sampling document may take from its training partner. */
export const INHERITED_CONCEPTS: readonly Concept[] = [
  'trainSteps',
  'betaSchedule',
  'betaStart',
  'betaEnd',
  'betas',
  'zeroTerminalSnr',
  'predictionTarget',
  'latentSpace',
];

const BETA_GROUP: readonly Concept[] = ['betaSchedule', 'betas', 'betaStart', 'betaEnd'];

export interface InheritedValue {
  concept: Concept;
  value: ConceptValues[Concept];
  /** Dotted key path in the training file; absent when that file assumes the value. */
  key?: string;
  assumedThere: boolean;
}

export interface ScheduleInheritance {
  /** The training file as messages name it. */
  from: string;
  /**
   * The training document's schedule family: only a discrete (beta) schedule hands down its betas;
   * a flow-matching one hands down T and the target; a continuous-sigma one nothing.
   */
  family: 'discrete' | 'flow' | 'sigma';
  values: InheritedValue[];
}

/** A paired document as pairing hands it over (PartnerDocument has this shape). */
export interface PartnerSetup {
  path: string;
  setup: Setup;
}

/**
 * The training document a sampling file is read against: the first diffusion document of the
 * partner(s) that is not a sampling setup, else the first diffusion document.
 */
export function trainingDocumentOf<P extends PartnerSetup>(partners: readonly P[]): P | null {
  return partners.find((p) => p.setup.isDiffusionConfig && p.setup.role !== 'sampling') ?? partners.find((p) => p.setup.isDiffusionConfig) ?? null;
}

function familyOf(setup: Setup): ScheduleInheritance['family'] {
  const f = setup.fields;
  if (f.predictionTarget?.value === 'flow' || f.sampler?.value === 'flow-euler' || f.flowShift?.source) return 'flow';
  if (f.betas || f.betaSchedule) return 'discrete';
  return 'sigma';
}

/**
 * What a file on the sampling side of a pair inherits, or null (no pair, the training side, no
 * usable training document).
 */
export function inheritanceFrom(
  partners: readonly PartnerSetup[] | undefined,
  pairRole: 'training' | 'sampling' | undefined,
): ScheduleInheritance | null {
  if (pairRole !== 'sampling' || !partners || partners.length === 0) return null;
  const training = trainingDocumentOf(partners);
  if (!training) return null;
  const family = familyOf(training.setup);
  if (family === 'sigma') return null;
  const values: InheritedValue[] = [];
  for (const concept of INHERITED_CONCEPTS) {
    const field = training.setup.fields[concept];
    if (!field) continue;
    const value = Array.isArray(field.value) ? [...field.value] : field.value;
    const item: InheritedValue = { concept, value, assumedThere: field.assumed || !field.source };
    if (field.source && !field.assumed) item.key = field.source.path;
    values.push(item);
  }
  return { from: training.path, family, values };
}

/** The note an inherited field carries (hover, explain). */
export function inheritedNote(from: string, item: Pick<InheritedValue, 'key' | 'assumedThere'>): string {
  return item.key ? `from training file ${from} (${item.key})` : `from training file ${from}, which assumes it too`;
}

/**
 * `setup` with the concepts it does not set taken from the training document. A document that
 * sets some of the beta schedule keeps its own family: it takes the range only where the training
 * file sets it or uses the same family. Training documents and non-configs are returned as they are.
 */
export function inheritSetup(setup: Setup, inheritance: ScheduleInheritance): Setup {
  if (!setup.isDiffusionConfig || setup.role === 'training') return setup;
  const fields: SetupFields = copyOf(setup.fields);
  const removed = new Set<Concept>();
  const taken: Concept[] = [];
  const byConcept = new Map(inheritance.values.map((v) => [v.concept, v]));
  // A key with an unusable value still counts as set: the file tried to say something.
  const own = (c: Concept) => !!fields[c]?.source || setup.problems.some((p) => p.concept === c);
  const take = (c: Concept) => {
    const item = byConcept.get(c);
    if (!item || own(c)) return;
    const field: ResolvedField = {
      concept: c,
      value: item.value,
      assumed: false,
      source: null,
      note: inheritedNote(inheritance.from, item),
      inherited: { from: inheritance.from, assumedThere: item.assumedThere, ...(item.key ? { key: item.key } : {}) },
    };
    (fields as Record<string, ResolvedField>)[c] = field;
    removed.add(c);
    taken.push(c);
  };
  const drop = (c: Concept) => {
    if (own(c) || !fields[c]) return;
    delete (fields as Record<string, unknown>)[c];
    removed.add(c);
  };

  if (inheritance.family === 'discrete') {
    if (!BETA_GROUP.some(own)) {
      for (const c of BETA_GROUP) {
        if (byConcept.has(c)) take(c);
        else drop(c);
      }
    } else if (!own('betas')) {
      take('betaSchedule');
      const sameFamily = fields.betaSchedule?.value === byConcept.get('betaSchedule')?.value;
      for (const c of ['betaStart', 'betaEnd'] as const) {
        const item = byConcept.get(c);
        if (item && (sameFamily || !item.assumedThere)) take(c);
      }
    }
    if (!own('betas')) {
      take('trainSteps');
      take('zeroTerminalSnr');
    }
  } else if (!own('betas')) {
    take('trainSteps');
  }
  take('predictionTarget');
  if (fields.latentSpace?.assumed) take('latentSpace');

  if (taken.length === 0) return setup;
  return withProps(setup, {
    fields,
    assumed: setup.assumed.filter((c) => !removed.has(c)),
    inherited: { from: inheritance.from, concepts: taken },
  });
}
