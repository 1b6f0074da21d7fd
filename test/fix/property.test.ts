/**
 * Property: for generated YAML configs with comments everywhere, a rendered set or remove applied
 * to the text reads back as intended, changes exactly the lines it should, and keeps every comment
 * (only a removed entry's own trailing comment may go, and then the edits say they touch a comment).
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { Concept } from '../../server/src/fields/concepts';
import { applyEdits, editsTouchComment, renderConceptEdits } from '../../server/src/fix';
import type { ConceptEdit } from '../../server/src/rules/types';
import { setupOf } from './helpers';

interface PoolEntry {
  concept: Concept;
  key: string;
  /** Values as [YAML text, value the reader returns]. */
  values: [string, unknown][];
}

const POOL: PoolEntry[] = [
  {
    concept: 'trainSteps',
    key: 'num_train_timesteps',
    values: [
      ['1000', 1000],
      ['500', 500],
    ],
  },
  {
    concept: 'betaSchedule',
    key: 'beta_schedule',
    values: [
      ['scaled_linear', 'scaled_linear'],
      ['linear', 'linear'],
      ['squaredcos_cap_v2', 'cosine'],
    ],
  },
  {
    concept: 'betaStart',
    key: 'beta_start',
    values: [
      ['0.00085', 0.00085],
      ['1.0e-4', 1e-4],
    ],
  },
  {
    concept: 'betaEnd',
    key: 'beta_end',
    values: [
      ['0.012', 0.012],
      ['0.02', 0.02],
    ],
  },
  {
    concept: 'zeroTerminalSnr',
    key: 'rescale_betas_zero_snr',
    values: [
      ['false', false],
      ['true', true],
    ],
  },
  {
    concept: 'predictionTarget',
    key: 'prediction_type',
    values: [
      ['epsilon', 'epsilon'],
      ['"v_prediction"', 'v'],
    ],
  },
  {
    concept: 'timestepSpacing',
    key: 'timestep_spacing',
    values: [
      ['leading', 'leading'],
      ["'linspace'", 'linspace'],
    ],
  },
  {
    concept: 'sampleSteps',
    key: 'num_inference_steps',
    values: [
      ['30', 30],
      ['8', 8],
    ],
  },
  {
    concept: 'guidanceScale',
    key: 'guidance_scale',
    values: [
      ['7.5', 7.5],
      ['12', 12],
    ],
  },
  {
    concept: 'guidanceRescale',
    key: 'guidance_rescale',
    values: [
      ['0.0', 0],
      ['1.2', 1.2],
    ],
  },
  {
    concept: 'offsetNoise',
    key: 'noise_offset',
    values: [
      ['0.1', 0.1],
      ['0.05', 0.05],
    ],
  },
  { concept: 'minSnrGamma', key: 'snr_gamma', values: [['5.0', 5]] },
  {
    concept: 'thresholding',
    key: 'clip_sample',
    values: [
      ['true', true],
      ['false', false],
    ],
  },
];

/** New values a set may ask for, per concept. */
const NEW_VALUES: Partial<Record<Concept, fc.Arbitrary<unknown>>> = {
  trainSteps: fc.integer({ min: 2, max: 4000 }),
  betaSchedule: fc.constantFrom('linear', 'scaled_linear', 'cosine', 'sigmoid'),
  betaStart: fc.integer({ min: 1, max: 9999 }).map((x) => x / 1e6),
  betaEnd: fc.integer({ min: 1, max: 9999 }).map((x) => x / 1e4),
  zeroTerminalSnr: fc.boolean(),
  predictionTarget: fc.constantFrom('epsilon', 'v', 'x0'),
  timestepSpacing: fc.constantFrom('leading', 'linspace', 'trailing'),
  sampleSteps: fc.integer({ min: 1, max: 200 }),
  guidanceScale: fc.integer({ min: 0, max: 300 }).map((x) => x / 10),
  guidanceRescale: fc.integer({ min: 0, max: 100 }).map((x) => x / 100),
  offsetNoise: fc.integer({ min: 1, max: 300 }).map((x) => x / 1000),
  minSnrGamma: fc.integer({ min: 1, max: 20 }),
  thresholding: fc.boolean(),
};

interface GenEntry {
  pool: number;
  section: number;
  value: number;
  commentAbove: boolean;
  commentAfter: boolean;
}

const SECTIONS = ['', 'scheduler', 'sampling'];

const arbConfig = fc.record({
  entries: fc.uniqueArray(
    fc.record({
      pool: fc.integer({ min: 0, max: POOL.length - 1 }),
      section: fc.integer({ min: 0, max: 2 }),
      value: fc.nat(),
      commentAbove: fc.boolean(),
      commentAfter: fc.boolean(),
    }),
    { minLength: 1, maxLength: POOL.length, selector: (e) => e.pool },
  ),
  extras: fc.array(fc.record({ section: fc.integer({ min: 0, max: 2 }), commentAfter: fc.boolean() }), { maxLength: 3 }),
  header: fc.boolean(),
  crlf: fc.boolean(),
  finalBreak: fc.boolean(),
});

type Cfg = typeof arbConfig extends fc.Arbitrary<infer T> ? T : never;

function buildText(cfg: Cfg): { text: string; comments: string[] } {
  let n = 0;
  const comments: string[] = [];
  const comment = () => {
    const c = `# lanternfish note ${n++}`;
    comments.push(c);
    return c;
  };
  const out: string[] = [];
  if (cfg.header) out.push(comment());
  SECTIONS.forEach((section, s) => {
    const here = (cfg.entries as GenEntry[]).filter((e) => e.section === s);
    const extras = cfg.extras.filter((e) => e.section === s);
    if (here.length === 0 && extras.length === 0) return;
    const indent = section ? '  ' : '';
    if (section) out.push(`${section}:`);
    extras.forEach((x, i) => out.push(`${indent}run_name_${i}: lanternfish-night-${i}${x.commentAfter ? `  ${comment()}` : ''}`));
    for (const e of here) {
      const p = POOL[e.pool]!;
      const [valueText] = p.values[e.value % p.values.length]!;
      if (e.commentAbove) out.push(`${indent}${comment()}`);
      out.push(`${indent}${p.key}: ${valueText}${e.commentAfter ? ` ${comment()}` : ''}`);
    }
  });
  const eol = cfg.crlf ? '\r\n' : '\n';
  return { text: out.join(eol) + (cfg.finalBreak ? eol : ''), comments };
}

const lineCount = (s: string) => s.split(/\r?\n/).length;

describe('fix rendering on generated YAML configs', () => {
  it('set and remove read back as intended and keep every comment', () => {
    const arbCase = arbConfig.chain((cfg) =>
      fc
        .record({
          cfg: fc.constant(cfg),
          remove: fc.boolean(),
          pool: fc.integer({ min: 0, max: POOL.length - 1 }),
        })
        .chain((c) =>
          fc.record({ cfg: fc.constant(c.cfg), remove: fc.constant(c.remove), pool: fc.constant(c.pool), value: NEW_VALUES[POOL[c.pool]!.concept]! }),
        ),
    );
    fc.assert(
      fc.property(arbCase, ({ cfg, remove, pool, value }) => {
        const { text, comments } = buildText(cfg);
        const concept = POOL[pool]!.concept;
        const entry = (cfg.entries as GenEntry[]).find((e) => e.pool === pool);
        const edit: ConceptEdit = remove ? { kind: 'remove', concept } : { kind: 'set', concept, value: value as never };
        const { parsed, setup } = setupOf(text);
        expect(parsed.problems.filter((p) => p.severity === 'error')).toEqual([]);
        const edits = renderConceptEdits(parsed, setup, [edit]);
        if (edits === null) {
          // The one allowed refusal: removing the only key of a section.
          const siblings =
            (cfg.entries as GenEntry[]).filter((e) => entry && e.section === entry.section).length +
            cfg.extras.filter((x) => entry && x.section === entry.section).length;
          expect(remove && entry && entry.section !== 0 && siblings === 1, `gave up on ${JSON.stringify(edit)} in\n${text}`).toBe(true);
          return;
        }
        const out = applyEdits(text, edits);
        const again = setupOf(out);
        expect(
          again.parsed.problems.filter((p) => p.severity === 'error'),
          out,
        ).toEqual([]);
        const field = again.setup.fields[concept];
        if (remove) {
          expect(field?.source ?? null).toBeNull();
          expect(lineCount(out)).toBe(lineCount(text) - (entry ? 1 : 0));
        } else {
          expect(field?.value, out).toEqual(value);
          expect(lineCount(out)).toBe(lineCount(text) + (entry ? 0 : 1));
        }
        // Every comment survives, except a removed entry's own trailing comment.
        const lost = comments.filter((c) => !out.includes(c));
        const removedLine = remove && entry ? text.split(/\r?\n/).find((l) => l.trimStart().startsWith(`${POOL[pool]!.key}:`)) : undefined;
        for (const c of lost) expect(removedLine?.includes(c), `lost ${c}:\n${out}`).toBe(true);
        expect(editsTouchComment(parsed, edits)).toBe(lost.length > 0);
        // Line endings: no bare LF sneaks into a CRLF file.
        if (cfg.crlf) expect(/(^|[^\r])\n/.test(out), JSON.stringify(out)).toBe(false);
      }),
      { numRuns: 300, seed: 20240611 },
    );
  });
});

/** JSONC texts: pretty-printed or one-line objects, own-line and trailing `//` comments. */
const arbJson = fc.record({
  entries: fc.uniqueArray(
    fc.record({
      pool: fc.integer({ min: 0, max: POOL.length - 1 }),
      section: fc.integer({ min: 0, max: 2 }),
      value: fc.nat(),
      commentAbove: fc.boolean(),
      commentAfter: fc.boolean(),
    }),
    { minLength: 1, maxLength: POOL.length, selector: (e) => e.pool },
  ),
  pretty: fc.boolean(),
  crlf: fc.boolean(),
});

type JsonCfg = typeof arbJson extends fc.Arbitrary<infer T> ? T : never;

/** YAML value text -> JSON value text. */
function jsonValue(yamlText: string): string {
  if (/^["']/.test(yamlText)) return JSON.stringify(yamlText.slice(1, -1));
  if (/^(true|false|[-+.\d][\d.eE+-]*)$/.test(yamlText)) return yamlText;
  return JSON.stringify(yamlText);
}

function buildJson(cfg: JsonCfg): { text: string; comments: string[] } {
  let n = 0;
  const comments: string[] = [];
  const comment = () => {
    const c = `// lanternfish note ${n++}`;
    comments.push(c);
    return c;
  };
  const eol = cfg.crlf ? '\r\n' : '\n';
  const member = (e: GenEntry) => `"${POOL[e.pool]!.key}": ${jsonValue(POOL[e.pool]!.values[e.value % POOL[e.pool]!.values.length]![0])}`;
  const groups = SECTIONS.map((_, s) => (cfg.entries as GenEntry[]).filter((e) => e.section === s));
  if (!cfg.pretty) {
    const parts: string[] = groups[0]!.map(member);
    groups.forEach((g, s) => {
      if (s > 0 && g.length > 0) parts.push(`"${SECTIONS[s]}": {${g.map(member).join(', ')}}`);
    });
    return { text: `{${parts.join(', ')}}${eol}`, comments };
  }
  const block = (items: GenEntry[], indent: string, tail: string[]): string[] => {
    const out: string[] = [];
    const all = [...items.map((e) => ({ e, text: member(e) })), ...tail.map((t) => ({ e: null as GenEntry | null, text: t }))];
    all.forEach(({ e, text }, i) => {
      if (e?.commentAbove) out.push(`${indent}${comment()}`);
      const comma = i < all.length - 1 ? ',' : '';
      out.push(`${indent}${text}${comma}${e?.commentAfter ? ` ${comment()}` : ''}`);
    });
    return out;
  };
  const sections: string[] = [];
  groups.forEach((g, s) => {
    if (s > 0 && g.length > 0) sections.push(`"${SECTIONS[s]}": {${eol}${block(g, '    ', []).join(eol)}${eol}  }`);
  });
  return { text: ['{', ...block(groups[0]!, '  ', sections), '}', ''].join(eol), comments };
}

describe('fix rendering on generated JSONC configs', () => {
  it('set and remove read back as intended and keep every comment', () => {
    const arbCase = arbJson.chain((cfg) =>
      fc
        .record({ remove: fc.boolean(), pool: fc.integer({ min: 0, max: POOL.length - 1 }) })
        .chain((c) =>
          fc.record({ cfg: fc.constant(cfg), remove: fc.constant(c.remove), pool: fc.constant(c.pool), value: NEW_VALUES[POOL[c.pool]!.concept]! }),
        ),
    );
    fc.assert(
      fc.property(arbCase, ({ cfg, remove, pool, value }) => {
        const { text, comments } = buildJson(cfg);
        const concept = POOL[pool]!.concept;
        const entry = (cfg.entries as GenEntry[]).find((e) => e.pool === pool);
        const edit: ConceptEdit = remove ? { kind: 'remove', concept } : { kind: 'set', concept, value: value as never };
        const { parsed, setup } = setupOf(text, 'jsonc');
        expect(
          parsed.problems.filter((p) => p.severity === 'error'),
          text,
        ).toEqual([]);
        const edits = renderConceptEdits(parsed, setup, [edit]);
        expect(edits, `gave up on ${JSON.stringify(edit)} in\n${text}`).not.toBeNull();
        const out = applyEdits(text, edits!);
        const again = setupOf(out, 'jsonc');
        expect(
          again.parsed.problems.filter((p) => p.severity === 'error'),
          out,
        ).toEqual([]);
        const field = again.setup.fields[concept];
        if (remove) expect(field?.source ?? null, out).toBeNull();
        else expect(field?.value, out).toEqual(value);
        const lost = comments.filter((c) => !out.includes(c));
        const removedLine = remove && entry ? text.split(/\r?\n/).find((l) => l.trimStart().startsWith(`"${POOL[pool]!.key}":`)) : undefined;
        for (const c of lost) expect(removedLine?.includes(c), `lost ${c}:\n${out}`).toBe(true);
        expect(editsTouchComment(parsed, edits!)).toBe(lost.length > 0);
        if (cfg.crlf) expect(/(^|[^\r])\n/.test(out), JSON.stringify(out)).toBe(false);
      }),
      { numRuns: 300, seed: 20240612 },
    );
  });
});
