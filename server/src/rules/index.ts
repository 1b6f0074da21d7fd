/** The rule registry: every rule of DESIGN section 5, in the order of that table. */
import { epsilonAtZeroSnr } from './epsilon-at-zero-snr';
import { fewStepsLinspace } from './few-steps-linspace';
import { guidanceOverexposure } from './guidance-overexposure';
import { guidanceRescaleRange } from './guidance-rescale-range';
import { infiniteSigmaAtZeroSnr } from './infinite-sigma-at-zero-snr';
import { latentThresholding } from './latent-thresholding';
import { loadedValueDiffers } from './loaded-value-differs';
import { minSnrDivision } from './min-snr-division';
import { minSnrDropsTerminalStep } from './min-snr-drops-terminal-step';
import { offsetNoiseConflict } from './offset-noise-conflict';
import { PARSE_ERROR_META } from './parse-error';
import { resolutionShiftHint } from './resolution-shift-hint';
import { samplerSkipsLastStep } from './sampler-skips-last-step';
import { scheduleInvalid } from './schedule-invalid';
import { stepsOutOfRange } from './steps-out-of-range';
import { terminalSnrLeak } from './terminal-snr-leak';
import { timestepOutOfRange } from './timestep-out-of-range';
import { trainSampleMismatch } from './train-sample-mismatch';
import type { Rule, RuleMeta } from './types';
import { unknownValue } from './unknown-value';
import { UNKNOWN_RULE_IN_COMMENT_META } from './unknown-rule-in-comment';

export const RULES: readonly Rule[] = [
  terminalSnrLeak,
  epsilonAtZeroSnr,
  samplerSkipsLastStep,
  fewStepsLinspace,
  guidanceOverexposure,
  guidanceRescaleRange,
  offsetNoiseConflict,
  scheduleInvalid,
  stepsOutOfRange,
  unknownValue,
  trainSampleMismatch,
  minSnrDivision,
  latentThresholding,
  resolutionShiftHint,
  timestepOutOfRange,
  infiniteSigmaAtZeroSnr,
  minSnrDropsTerminalStep,
  loadedValueDiffers,
];

export const RULE_IDS: readonly string[] = RULES.map((r) => r.meta.id);

/**
 * Rule ids the engine reports besides the rules: `parse-error` for text that cannot be read,
 * `unknown-rule-in-comment` for a `noiselint: deliberate` comment naming no rule.
 */
export const ENGINE_RULE_METAS: readonly RuleMeta[] = [PARSE_ERROR_META, UNKNOWN_RULE_IN_COMMENT_META];

/** Metadata of every id a finding can carry (rules, then engine ids). */
export const ALL_RULE_METAS: readonly RuleMeta[] = [...RULES.map((r) => r.meta), ...ENGINE_RULE_METAS];

export function getRule(id: string): Rule | undefined {
  return RULES.find((r) => r.meta.id === id);
}

export function getRuleMeta(id: string): RuleMeta | undefined {
  return ALL_RULE_METAS.find((m) => m.id === id);
}

/** Path of a rule's documentation page, relative to the repository root. */
export function ruleDocPath(id: string): string {
  return `docs/rules/${id}.md`;
}

export { PARSE_ERROR_ID } from './parse-error';
export { UNKNOWN_RULE_IN_COMMENT_ID } from './unknown-rule-in-comment';
export { assumedNote } from './util';
export { fmt } from './format';
export type { Rule, RuleMeta, RuleContext, RuleFinding, ConceptEdit, ConceptFix, PartnerDocument } from './types';
