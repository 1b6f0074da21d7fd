import type { RuleMeta } from './types';

/** Reported by the engine: it knows the rule ids, the parser that reads the comments does not. */
export const UNKNOWN_RULE_IN_COMMENT_ID = 'unknown-rule-in-comment';

const docs = `
## What triggers it

A \`noiselint: deliberate ...\` comment that names a rule id no rule has, usually a typo
(\`terminal-snr-leek\`). The message names the closest rule id when one is within two edits.
Only files that hold a diffusion config are checked.

## What the run loses

Nothing is kept quiet by a misspelled id: the finding the comment was written for still shows,
or, once the rule's id changes, the comment silently stops doing anything while the reader of
the config believes the choice was reviewed. Saying so keeps the record of deliberate choices
true.

## A flagged config

\`\`\`yaml
# Lanternfish Pictures: archive fine-tune, schedule kept as the base checkpoint has it
noise_scheduler:
  num_train_timesteps: 1000
  # noiselint: deliberate terminal-snr-leek because the base checkpoint was trained on it
  beta_schedule: scaled_linear
  rescale_betas_zero_snr: true
  prediction_type: v_prediction
\`\`\`

## The repaired config

\`\`\`yaml
# Lanternfish Pictures: archive fine-tune, schedule kept as the base checkpoint has it
noise_scheduler:
  num_train_timesteps: 1000
  # noiselint: deliberate terminal-snr-leak because the base checkpoint was trained on it
  beta_schedule: scaled_linear
  rescale_betas_zero_snr: true
  prediction_type: v_prediction
\`\`\`

## Effect on a trained checkpoint

No repair offered: the comment is the user's text. Correcting the id changes nothing the model
learns or how it is sampled; it only decides which findings are shown.

## Numbers you can tune

The suggestion looks two edits far at most; that distance is fixed.

## Published sources

- Levenshtein 1966, "Binary codes capable of correcting deletions, insertions, and reversals"
  (the edit distance behind the suggested id).
`;

export const UNKNOWN_RULE_IN_COMMENT_META: RuleMeta = {
  id: UNKNOWN_RULE_IN_COMMENT_ID,
  summary: 'A noiselint: deliberate comment names a rule id that no rule has.',
  defaultSeverity: 'warning',
  repair: null,
  options: {},
  docs,
};
