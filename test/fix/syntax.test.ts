/**
 * Property: every fix analyzeText offers on a file that parses keeps it parsing. Most fixes are
 * not parsed again during analysis (fix/render.ts writes shapes that keep the syntax by
 * construction), so this checks the construction against the parser on YAML with the constructs
 * that break naive edits: anchors and aliases, explicit keys, tags, values on the next line,
 * block scalars, flow maps, list dashes (with tabs), several documents, CRLF. The fixtures are
 * invented Lanternfish Pictures configs.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { analyzeText } from '../../server/src/engine/api';
import { applyEdits } from '../../server/src/fix';
import { parseText } from '../../server/src/parse';

const FIELDS: [string, string[]][] = [
  ['num_train_timesteps', ['1000']],
  ['beta_schedule', ['scaled_linear', 'linear', "'scaled_linear'", '"linear"']],
  ['beta_start', ['0.00085', '1e-4']],
  ['beta_end', ['0.012', '0.02']],
  ['prediction_type', ['epsilon', '"epsilon"', "'v_prediction'"]],
  ['timestep_spacing', ['leading', 'linspace', '"leading"']],
  ['num_inference_steps', ['30', '4']],
  ['guidance_scale', ['7.5', '12']],
  ['noise_offset', ['0.1', '0.05']],
  ['rescale_betas_zero_snr', ['false', 'False']],
  ['trained_betas', ['[0.0001, 0.0002, 0.02]', '\n  - 0.0001\n  - 0.001\n  - 0.02']],
];

const pick = <T>(xs: T[], n: number): T => xs[n % xs.length]!;

/** One `key: value` line in one of the shapes, driven by the numbers in `d`. */
function line(field: [string, string[]], indent: string, d: number[]): string {
  const [key, values] = field;
  const value = pick(values, d[0]!);
  const decorated = pick(
    [value, value, value, `&a${d[1]! % 2} ${value}`, `!!str ${value}`, `\n${indent}    ${value}`, `*a${d[1]! % 2}`, `|\n${indent}    ${value}\n`],
    d[2]!,
  );
  const k = pick([key, key, key, `"${key}"`, `&k ${key}`], d[3]!);
  const body = d[4]! % 17 === 0 ? `${indent}? ${k}\n${indent}: ${decorated}` : `${indent}${k}:${d[5]! % 5 === 0 ? '   ' : ' '}${decorated}`;
  return body + pick(['', '', ' # Lanternfish note', '  #: odd comment'], d[6]!);
}

const configArb = fc
  .record({
    shape: fc.nat(7),
    fields: fc.shuffledSubarray(FIELDS, { minLength: 3 }),
    digits: fc.array(fc.array(fc.nat(1000), { minLength: 7, maxLength: 7 }), { minLength: FIELDS.length, maxLength: FIELDS.length }),
    crlf: fc.boolean(),
    anchorFirst: fc.boolean(),
  })
  .map(({ shape, fields, digits, crlf, anchorFirst }) => {
    const block = (indent: string) => fields.map((f, i) => line(f, indent, digits[i]!)).join('\n');
    const flow = `{${fields
      .filter(([k]) => k !== 'trained_betas')
      .map(([k, vs], i) => `${k}: ${pick(vs, digits[i]![0]!)}`)
      .join(pick([', ', ',\n  '], digits[0]![1]!))}}`;
    const bodies = [
      block(''),
      `scheduler:\n${block('  ')}\nname: harbour-dusk`,
      `- ${block('  ').slice(2)}`,
      `-\t${block('  ').slice(2)}`,
      `scheduler: ${flow}\nname: harbour-dusk`,
      flow,
      `---\n${block('')}\n---\nname: second\n...`,
      `${block('')}\n`,
    ];
    let text = pick(bodies, shape);
    if (anchorFirst) text = `base: &a0 0.1\n${text}`;
    if (crlf) text = text.replace(/\n/g, '\r\n');
    return text;
  });

const syntaxErrors = (text: string) => parseText(text, 'yaml').problems.filter((p) => p.severity === 'error').length;

describe('fixes keep a parsing file parsing', () => {
  it('every offered fix, applied alone, adds no syntax error and keeps the documents', () => {
    let offered = 0;
    fc.assert(
      fc.property(configArb, (text) => {
        const before = parseText(text, 'yaml');
        fc.pre(before.problems.every((p) => p.severity !== 'error'));
        for (const finding of analyzeText(text, { path: 'sampler.yaml' }).findings) {
          for (const fix of finding.fixes) {
            offered++;
            const after = applyEdits(text, fix.edits);
            expect(syntaxErrors(after), `${fix.title}\n${after}`).toBe(0);
            expect(parseText(after, 'yaml').documents.length).toBe(before.documents.length);
          }
        }
      }),
      { seed: 20261202, numRuns: 300 },
    );
    // The property saw fixes at all (a generator that made no fixable config would prove nothing).
    expect(offered).toBeGreaterThan(300);
  });
});
