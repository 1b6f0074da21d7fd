import { valueKindOf } from '../fields/values';
import type { FieldSource } from '../setup/types';
import { defineRule, type RuleFinding, type RuleMeta } from './types';

const docs = `
## What triggers it

A value that the document's loader reads differently from how it looks, at a key the consuming
code reads (the consumer profile stage decides the loader: docs/consumers.md):

- a number that the loader hands over as a string: PyYAML reads \\\`1e-4\\\` (no dot) and
  \\\`1.0e4\\\` (no exponent sign) as strings (error);
- an OmegaConf interpolation that cannot be resolved (error): the consumer gets no value there;
- an interpolation or environment default that OmegaConf hands over as a string where a number is
  expected (\\\`\${oc.env:STEPS,1000}\\\`, warning);
- a word that the loader reads as a boolean where a name is expected (\\\`yes\\\`, \\\`off\\\`, warning).

The message says what the consumer will receive.

## What the run loses

The run fails at start-up (a scheduler or model class doing arithmetic on a string raises a
TypeError), or, worse, it starts with a value nobody wrote: a comparison between a string and a
number, an absent key replaced by a class default. The file looks right to every reader except
the one that matters.

## A flagged config

\`\`\`yaml
# Lanternfish Pictures: pixel preview scheduler, hand-written in YAML
_class_name: DDPMScheduler
num_train_timesteps: 1000
beta_schedule: linear
beta_start: 1e-4
beta_end: 0.02
\`\`\`

## The repaired config

\`\`\`yaml
_class_name: DDPMScheduler
num_train_timesteps: 1000
beta_schedule: linear
beta_start: 0.0001
beta_end: 0.02
\`\`\`

## Effect on a trained checkpoint

Sampling only: the fix writes the value that was meant in a spelling the loader reads as a
number (\\\`1e-4\\\` becomes \\\`0.0001\\\`); the checkpoint stays valid. Unresolved interpolations and
values read as booleans get no fix: the message says what the loader sees.

## Numbers you can tune

## Published sources

- YAML Ain't Markup Language 1.1 (2005), the implicit types bool, int and float, which PyYAML 6
  follows (yaml/resolver.py).
- OmegaConf 2.3 documentation (2022): variable interpolation and the oc.env resolver.
`;

const meta = {
  id: 'loaded-value-differs',
  summary: 'A value the loader reads differently from how it looks (a number read as a string, an unresolved interpolation).',
  defaultSeverity: 'error',
  repair: { effects: ['sampling-only'], everyFinding: false },
  options: {},
  docs,
} satisfies RuleMeta;

function shown(v: unknown): string {
  return typeof v === 'string' ? `the string "${v}"` : String(v);
}

export const loadedValueDiffers = defineRule({
  meta,
  check(ctx) {
    const { setup } = ctx;
    const consumer = setup.consumer;
    if (!consumer || consumer.loaderReadings.length === 0) return [];
    const loader = consumer.decision.dialectTitle.split(' (')[0];
    const who = consumer.decision.className ?? 'the consuming code';
    const bySpan = new Map<number, { concept: keyof typeof setup.fields; source: FieldSource }>();
    for (const field of Object.values(setup.fields)) {
      if (field?.source) bySpan.set(field.source.valueSpan.start, { concept: field.concept, source: field.source });
    }
    for (const [concept, source] of Object.entries(setup.nullKeys ?? {})) {
      if (source) bySpan.set(source.valueSpan.start, { concept: concept as keyof typeof setup.fields, source });
    }
    const out: RuleFinding[] = [];
    for (const r of consumer.loaderReadings) {
      const hit = bySpan.get(r.span.start);
      if (!hit) continue;
      const kind = valueKindOf(hit.concept);
      const key = hit.source.key;
      const assumed = setup.fields[hit.concept];
      if (r.unresolved) {
        const fallback = assumed?.assumed ? `; ${who} uses its default ${String(assumed.value)} instead (assumed)` : '';
        out.push({ message: `${key}: ${r.raw} cannot be resolved by ${loader}: ${r.unresolved}${fallback}`, source: hit.source, severity: 'error' });
        continue;
      }
      const numeric = kind === 'number' || kind === 'integer';
      if (numeric && r.loaded.kind === 'str') {
        const n = Number(String(r.loaded.value).trim());
        const message = `${key}: ${r.raw} looks like ${Number.isFinite(n) ? `the number ${n}` : 'a number'}, but ${loader} reads it as ${shown(r.loaded.value)}, so ${who} receives a string where it needs a number`;
        const finding: RuleFinding = { message, source: hit.source, severity: r.interpolation ? 'warning' : 'error' };
        if (!r.interpolation && Number.isFinite(n)) {
          finding.fixes = [
            {
              title: 'Write {newText}, which the loader reads as a number (sampling only)',
              effect: 'sampling-only',
              edits: [{ kind: 'set', concept: hit.concept, value: n, plainSpelling: true }],
            },
          ];
        }
        out.push(finding);
        continue;
      }
      if (kind === 'enum' && r.loaded.kind === 'bool') {
        out.push({
          message: `${key}: ${r.raw} is read by ${loader} as the boolean ${String(r.loaded.value)}, not as a name; quote it if a name is meant`,
          source: hit.source,
          severity: 'warning',
        });
      }
    }
    return out;
  },
});
