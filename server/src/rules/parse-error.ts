import type { RuleMeta } from './types';

export const PARSE_ERROR_ID = 'parse-error';

const docs = `
## What triggers it

Text that cannot be read as YAML, JSON, JSON with comments or TOML, in a file that looks like a
diffusion config (a document is recognised as one, or the text names a key such as
\`beta_schedule\` or \`num_train_timesteps\`). Syntax errors are errors; readable oddities
(a comment in a \`.json\` file, a duplicated key, a custom tag) are warnings. Other YAML,
JSON and TOML files in a workspace are never reported. A TOML file with a syntax error is
not read at all, as TOML loaders refuse it whole.

## What the run loses

A config that does not parse stops the run before it starts, or, worse, a lenient loader reads
something other than what was written (the later of two duplicated keys wins without a word).
Nothing else can be checked in text that cannot be read.

## A flagged config

\`\`\`yaml
# Lanternfish Pictures: half-edited training file
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: [scaled_linear
  beta_start: 0.00085
\`\`\`

## The repaired config

\`\`\`yaml
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
\`\`\`

## Effect on a trained checkpoint

No repair offered.

## Numbers you can tune

Limits on file size, nesting and list length are project settings (\`limits\`).

## Published sources

- Ben-Kiki, Evans and döt Net 2021, "YAML Ain't Markup Language, version 1.2.2".
- Bray 2017, RFC 8259, "The JavaScript Object Notation (JSON) Data Interchange Format".
- Preston-Werner and Gedda 2021, "TOML v1.0.0".
`;

export const PARSE_ERROR_META: RuleMeta = {
  id: PARSE_ERROR_ID,
  summary: 'Text that cannot be read as YAML / JSON / TOML, in a file that looks like a diffusion config.',
  defaultSeverity: 'error',
  repair: null,
  options: {},
  docs,
};
