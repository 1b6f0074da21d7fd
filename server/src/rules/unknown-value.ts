import { suggestionEdit } from './suggest';
import { defineRule, type RuleFinding, type RuleMeta } from './types';
import { ruleForProblem } from './util';

const docs = `
## What triggers it

A value the tool cannot read: an enum value it does not recognise (a misspelt beta schedule,
prediction target, timestep spacing or sampler) or, for fields outside the schedule, a value of
the wrong type (a word where a number belongs). When a known spelling is close, the message
names it. A field outside the schedule that is set twice with different values (two sections
or two spellings) is a warning on the one that is ignored (the first in the file is used).

## What the run loses

Training and sampling code usually compares these strings exactly. A misspelt value either
crashes at start-up, after the job has waited for its GPUs, or silently falls back to a default,
so the run uses a schedule or target nobody chose. Every other check in this tool also needs to
know the value, so nothing else is checked for that field.

## A flagged config

\`\`\`yaml
# Lanternfish Pictures: storyboard sampler
scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  timestep_spacing: trailng
num_inference_steps: 30
\`\`\`

## The repaired config

\`\`\`yaml
scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  timestep_spacing: trailing
num_inference_steps: 30
\`\`\`

## Effect on a trained checkpoint

Sampling only, when a close known spelling exists: the fix writes it. The value was unusable before, so
no run can have relied on it. No fix when nothing is close.

## Numbers you can tune


## Published sources

- Common practice: the spellings accepted are those found across open training code; the alias
  table of this tool lists them.
- Damerau 1964 and Levenshtein 1966: the edit distance (with transpositions) behind the
  suggested spelling.
`;

const meta = {
  id: 'unknown-value',
  summary: 'An enum value the tool does not recognise, or a value of the wrong type.',
  defaultSeverity: 'error',
  repair: { effects: ['sampling-only'], everyFinding: false },
  options: {},
  docs,
} satisfies RuleMeta;

export const unknownValue = defineRule({
  meta,
  check(ctx) {
    return ctx.setup.problems
      .filter((problem) => ruleForProblem(problem) === 'unknown-value')
      .map((problem): RuleFinding => {
        const finding: RuleFinding = {
          message: problem.message,
          source: problem.source,
          severity: problem.kind === 'duplicate' ? 'warning' : 'error',
        };
        const edit = problem.kind === 'unknown-value' && problem.suggestion ? suggestionEdit(problem.concept, problem.suggestion) : null;
        if (edit) finding.fixes = [{ title: 'Write {newText} instead', effect: 'sampling-only', edits: [edit] }];
        return finding;
      });
  },
});
