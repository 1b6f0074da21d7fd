/**
 * Bad input never crashes the read path: random and mutated texts give a ParsedFile whose spans
 * stay inside the text, and a Setup for every document.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { parseText, type LocatedNode, type ParsedFile, type SourceFormat } from '../../server/src/parse';
import { buildSetup } from '../../server/src/setup';

const SEED_YAML = `# runs/high-key-stills.yaml
noise_scheduler: &ns
  num_train_timesteps: 1000
  beta_schedule: "scaled_linear"
  trained_betas: [0.00085, 0.0009, 0.001]
sampling:
  <<: *ns
  num_inference_steps: 30   # noiselint: deliberate sampler-skips-last-step because old renders
  guidance_scale: 7.5
  notes: |
    white backgrounds
`;
const SEED_JSON = '{"scheduler": {"_class_name": "DDIMScheduler", "betas": [0.1, 0.2, 0.3]}, // c\n "num_inference_steps": 30}';

function checkFile(file: ParsedFile): void {
  const n = file.text.length;
  const inside = (s: { start: number; end: number }) => s.start >= 0 && s.end <= n && s.start <= s.end;
  for (const p of file.problems) {
    expect(inside(p.span)).toBe(true);
    expect(p.message).not.toMatch(/\n/);
  }
  for (const doc of file.documents) {
    const stack: LocatedNode[] = doc.root ? [doc.root] : [];
    let steps = 0;
    while (stack.length && steps++ < 100_000) {
      const node = stack.pop()!;
      expect(inside(node.span)).toBe(true);
      if (node.kind === 'map') {
        for (const e of node.entries) {
          expect(inside(e.keySpan)).toBe(true);
          expect(inside(e.span)).toBe(true);
          if (e.value) stack.push(e.value);
        }
      } else if (node.kind === 'list') stack.push(...node.items);
    }
    const setup = buildSetup(doc);
    expect(typeof setup.isDiffusionConfig).toBe('boolean');
  }
}

function mutate(seed: string, edits: { at: number; del: number; ins: string }[]): string {
  let text = seed;
  for (const e of edits) {
    const at = e.at % (text.length + 1);
    text = text.slice(0, at) + e.ins + text.slice(at + e.del);
  }
  return text;
}

const edit = fc.record({
  at: fc.nat(),
  del: fc.nat({ max: 4 }),
  ins: fc.constantFrom('', ':', '-', ' ', '\n', '\t', '[', ']', '{', '}', '"', "'", '&a', '*a', '!!x ', '#', '\uFEFF', '\r\n', ',', '|', '<<: '),
});

describe('robustness', () => {
  for (const [format, seed] of [
    ['yaml', SEED_YAML],
    ['json', SEED_JSON],
    ['jsonc', SEED_JSON],
  ] as [SourceFormat, string][]) {
    it(`mutated ${format} never throws and keeps spans inside the text`, () => {
      fc.assert(
        fc.property(fc.array(edit, { maxLength: 8 }), (edits) => {
          checkFile(parseText(mutate(seed, edits), format));
        }),
        { numRuns: 150 },
      );
    });
  }

  it('random text never throws', () => {
    fc.assert(
      fc.property(fc.string({ maxLength: 200 }), fc.constantFrom<SourceFormat>('yaml', 'json', 'jsonc'), (text, format) => {
        checkFile(parseText(text, format));
      }),
      { numRuns: 200 },
    );
  });
});
