/** The concept edit that writes an unknown value's suggested spelling. */
import { BETA_SCHEDULE_SPELLINGS, PREDICTION_TARGET_SPELLINGS, SAMPLER_SPELLINGS, TIMESTEP_SPACING_SPELLINGS } from '../fields/aliases';
import type { Concept } from '../fields/concepts';
import { normalizeValue } from '../fields/normalize';
import type { ConceptEdit } from './types';

const TABLES: Partial<Record<Concept, Record<string, string[]>>> = {
  betaSchedule: BETA_SCHEDULE_SPELLINGS,
  predictionTarget: PREDICTION_TARGET_SPELLINGS,
  timestepSpacing: TIMESTEP_SPACING_SPELLINGS,
  sampler: SAMPLER_SPELLINGS,
};

/** The normalised member a suggested spelling names, as a set edit; null when it names none. */
export function suggestionEdit(concept: Concept, suggestion: string): ConceptEdit | null {
  const table = TABLES[concept];
  if (!table) return null;
  const wanted = normalizeValue(suggestion);
  for (const [member, spellings] of Object.entries(table)) {
    if (spellings.some((s) => normalizeValue(s) === wanted)) {
      return { kind: 'set', concept, value: member } as ConceptEdit;
    }
  }
  return null;
}
