/** Helpers shared by the rules: reading fields, noting assumptions, the zero-terminal-SNR fix. */
import { samplingTimesteps } from '@noiselint/shared-math';
import type { Analysis, SamplingAnalysis, ScheduleAnalysis } from '../analysis/analysis';
import type { Concept, ConceptValues } from '../fields/concepts';
import { CONCEPT_GROUP } from '../fields/concepts';
import type { FieldSource, Setup, ValueProblem } from '../setup/types';
import { fmt, fmtValue } from './format';
import type { ConceptEdit, ConceptFix, RuleContext, RuleFinding } from './types';

/** Written in every title of a fix that changes what a model learns. */
export const RETRAIN_NOTE = '(needs fine-tuning or retraining)';

/** The field's source when the file sets the concept (not assumed). */
export function sourceOf(setup: Setup, concept: Concept): FieldSource | null {
  const field = setup.fields[concept];
  if (!field || field.assumed) return null;
  return field.source;
}

/** True when the file itself sets the concept. */
export function isSet(setup: Setup, concept: Concept): boolean {
  return sourceOf(setup, concept) !== null;
}

export function isAssumed(setup: Setup, concept: Concept): boolean {
  const field = setup.fields[concept];
  return !!field && field.assumed;
}

/** Value problems of a concept (not-a-number, unknown-value, ...). */
export function problemsOf(setup: Setup, concept: Concept): ValueProblem[] {
  return setup.problems.filter((p) => p.concept === concept);
}

export function hasProblem(setup: Setup, concept: Concept): boolean {
  return setup.problems.some((p) => p.concept === concept);
}

/** A concept value as a message shows it. */
export function showValue(value: ConceptValues[Concept] | undefined): string {
  if (value === undefined) return 'nothing';
  if (typeof value === 'number') return fmt(value);
  if (typeof value === 'boolean') return String(value);
  if (Array.isArray(value)) return `a list of ${value.length}`;
  return String(value);
}

/**
 * " (assumed: betaSchedule = linear; betaStart = 1e-4)" for those of `concepts` whose value the
 * setup assumed because the file sets none, in one parenthesis; "" when the finding rests on
 * nothing assumed.
 */
export function assumedNote(setup: Setup, concepts: readonly Concept[], extra: readonly string[] = []): string {
  // `extra`: assumptions the analysis made that are not setup fields ("sampleSteps = 50").
  const parts: string[] = [...extra];
  let pendingNote = '';
  for (const concept of concepts) {
    const field = setup.fields[concept];
    if (!field || !field.assumed) continue;
    // An inferred value (or one from the project file) says where it came from; a plain default needs
    // no more than its value. Values that share one basis (a script's fixed schedule) name it once.
    const how = field.note && !field.note.startsWith('not set') ? field.note : '';
    const part = `${concept} = ${showValue(field.value)}`;
    if (how && how === pendingNote && parts.length > 0) {
      parts[parts.length - 1] = parts[parts.length - 1]!.replace(`, ${how}`, `, ${part}, ${how}`);
      continue;
    }
    parts.push(how ? `${part}, ${how}` : part);
    pendingNote = how;
  }
  const assumed = parts.length ? ` (assumed: ${parts.join('; ')})` : '';
  return assumed + inheritedNote(setup, concepts);
}

/**
 * " (from training file train.yaml: betaSchedule = scaled_linear; zeroTerminalSnr = true)" for
 * those of `concepts` the document takes from its paired training file; "" when none.
 */
export function inheritedNote(setup: Setup, concepts: readonly Concept[]): string {
  const parts: string[] = [];
  let from: string | undefined;
  for (const concept of concepts) {
    const origin = setup.fields[concept]?.inherited;
    if (!origin) continue;
    from ??= origin.from;
    parts.push(`${concept} = ${showValue(setup.fields[concept]!.value)}${origin.assumedThere ? ' (assumed there)' : ''}`);
  }
  return parts.length ? ` (from training file ${from}: ${parts.join('; ')})` : '';
}

/** True when the document takes its schedule (family or beta list) from its training file. */
export function inheritsSchedule(setup: Setup): boolean {
  return !!(setup.fields.betaSchedule?.inherited || setup.fields.betas?.inherited || setup.fields.trainSteps?.inherited);
}

/** " (schedule from training file X)" when the document takes its schedule from its partner. */
export function scheduleOrigin(setup: Setup): string {
  if (!inheritsSchedule(setup)) return '';
  return ` (schedule from training file ${setup.inherited?.from ?? 'of the pair'})`;
}

/** Concepts that decide a discrete schedule's numbers (for assumedNote). */
export function scheduleConcepts(setup: Setup): Concept[] {
  if (setup.fields.betas && !setup.fields.betas.assumed) return ['trainSteps'];
  const kind = setup.fields.betaSchedule?.value;
  const out: Concept[] = ['betaSchedule', 'trainSteps'];
  if (kind !== 'cosine') out.push('betaStart', 'betaEnd');
  return out;
}

/**
 * True when the file sets at least one field that shapes the schedule (not all assumed), or is the
 * argument set of a script whose schedule is known without one (the script's own, consumer profile).
 */
export function setsSchedule(setup: Setup): boolean {
  if (setup.consumer?.scheduleFromCode === true) return true;
  return (['trainSteps', 'betaSchedule', 'betaStart', 'betaEnd', 'betas', 'zeroTerminalSnr'] as const).some((c) => isSet(setup, c));
}

/** True when the file sets a field of the given group. */
export function setsGroup(setup: Setup, group: 'schedule' | 'sampling' | 'training' | 'model'): boolean {
  return Object.values(setup.fields).some((f) => !!f && !f.assumed && !!f.source && CONCEPT_GROUP[f.concept] === group);
}

/** The discrete schedule of the document, if it could be computed. */
export function discreteSchedule(analysis: Analysis): ScheduleAnalysis | null {
  return analysis.schedule && analysis.schedule.family === 'discrete' ? analysis.schedule : null;
}

/** "scaled_linear 8.5e-4 -> 0.012 over T = 1000" */
export function describeSchedule(setup: Setup, schedule: ScheduleAnalysis): string {
  const T = schedule.trainSteps;
  let text: string;
  switch (schedule.kind) {
    case 'explicit':
      text = `an explicit list of ${T} betas`;
      break;
    case 'cosine':
      text = `cosine over T = ${T}`;
      break;
    case 'linear':
    case 'scaled_linear':
    case 'sigmoid': {
      const b0 = setup.fields.betaStart?.value;
      const b1 = setup.fields.betaEnd?.value;
      text = b0 !== undefined && b1 !== undefined ? `${schedule.kind} ${fmt(b0)} -> ${fmt(b1)} over T = ${T}` : `${schedule.kind} over T = ${T}`;
      break;
    }
    default:
      text = `${schedule.kind} over T = ${T}`;
  }
  return schedule.rescaleApplied ? `${text}, rescaled to zero terminal SNR` : text;
}

/** The prediction target, epsilon when neither set nor assumed (the common default). */
export function targetOf(setup: Setup): ConceptValues['predictionTarget'] {
  return setup.fields.predictionTarget?.value ?? 'epsilon';
}

/**
 * Rescale to zero terminal SNR (Lin et al. 2023, Algorithm 1): set the flag, or rewrite an
 * explicit beta list. An epsilon target is switched to v in the same fix, since epsilon cannot
 * be used at zero SNR. null when the schedule cannot be rescaled.
 */
export function zeroSnrFix(ctx: RuleContext, also?: { edits: ConceptEdit[]; title: string }): ConceptFix | null {
  const { setup, analysis } = ctx;
  const schedule = discreteSchedule(analysis);
  if (!schedule || schedule.rescaleApplied) return null;
  const edits: ConceptEdit[] = [];
  const parts: string[] = [];
  if (schedule.kind === 'explicit') {
    if (!analysis.rescaled) return null;
    edits.push({ kind: 'set', concept: 'betas', value: Array.from(analysis.rescaled.betas, fmtValue) });
    parts.push('Replace the beta list with its zero-terminal-SNR rescale');
  } else if (setup.consumer?.rescaleViaBetas) {
    // The consumer has no rescale flag but takes an explicit beta list (consumer profile).
    if (!analysis.rescaled) return null;
    const key = setup.consumer.insertKeys?.betas ?? 'an explicit beta list';
    edits.push({ kind: 'set', concept: 'betas', value: Array.from(analysis.rescaled.betas, fmtValue) });
    parts.push(`Pass the zero-terminal-SNR rescale of the schedule as ${key}`);
  } else {
    edits.push({ kind: 'set', concept: 'zeroTerminalSnr', value: true });
    parts.push('Rescale the schedule to zero terminal SNR');
  }
  if (targetOf(setup) === 'epsilon') {
    edits.push({ kind: 'set', concept: 'predictionTarget', value: 'v' });
    parts.push('switch the target to v');
  }
  if (also) {
    edits.push(...also.edits);
    parts.push(also.title);
  }
  const title = parts.length === 1 ? parts[0] : `${parts.slice(0, -1).join(', ')} and ${parts[parts.length - 1]}`;
  return { title: `${title} ${RETRAIN_NOTE}`, effect: 'needs-retraining', edits };
}

/** Spacing -> trailing (plus offset 0 when the offset would push trailing out of range). */
export function trailingFix(setup: Setup, T: number, sampling: SamplingAnalysis): ConceptFix | null {
  const inRange = (ts: number[]) => ts.every((t) => t >= 0 && t <= T - 1);
  const edits: ConceptEdit[] = [{ kind: 'set', concept: 'timestepSpacing', value: 'trailing' }];
  const trailing = samplingTimesteps('trailing', T, sampling.steps, sampling.stepsOffset);
  if (!trailing.ok) return null;
  if (!inRange(trailing.value)) {
    // Only an offset that pushes trailing out of range is worth touching.
    if (sampling.stepsOffset === 0 || !isSet(setup, 'stepsOffset')) return null;
    const withoutOffset = samplingTimesteps('trailing', T, sampling.steps, 0);
    if (!withoutOffset.ok || !inRange(withoutOffset.value)) return null;
    edits.push({ kind: 'set', concept: 'stepsOffset', value: 0 });
  }
  return { title: 'Set the timestep spacing to trailing (sampling only)', effect: 'sampling-only', edits };
}

/** Which rule reports a value problem of the setup. */
export type ProblemRule = 'schedule-invalid' | 'steps-out-of-range' | 'unknown-value';

export function ruleForProblem(problem: ValueProblem): ProblemRule {
  if (problem.kind === 'unknown-value') return 'unknown-value';
  if (problem.concept === 'sampleSteps') return 'steps-out-of-range';
  if (CONCEPT_GROUP[problem.concept] === 'schedule') return 'schedule-invalid';
  return 'unknown-value';
}

/** Value problems as findings: error, except a duplicated key (the value used is ambiguous). */
export function problemFindings(setup: Setup, rule: ProblemRule): RuleFinding[] {
  return setup.problems
    .filter((p) => ruleForProblem(p) === rule)
    .map((p) => ({
      message: p.message,
      source: p.source,
      severity: p.kind === 'duplicate' ? ('warning' as const) : ('error' as const),
    }));
}
