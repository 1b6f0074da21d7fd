/**
 * fast-check arbitraries for diffusion configs in YAML, JSON and JSONC: random keys and nesting
 * mixed with real concept keys, hostile values (NaN, Infinity, 1e308, -0, huge integers, wrong
 * types, long and unicode strings), CRLF, a BOM, and random text mutations on top.
 *
 * The generator renders text itself (rather than through a serialiser) so that it can write
 * spellings a serialiser would normalise away (`.nan`, `1e999`, `-0`, trailing commas).
 */
import fc from 'fast-check';
import type { SourceFormat } from '../../server/src/parse/types';

/** Key spellings users already have (DESIGN section 3), plus a few near misses. */
export const CONCEPT_KEYS = [
  'num_train_timesteps',
  'timesteps',
  'num_timesteps',
  'diffusion_steps',
  'beta_schedule',
  'noise_schedule',
  'schedule',
  'beta_start',
  'beta_end',
  'linear_start',
  'linear_end',
  'trained_betas',
  'betas',
  'rescale_betas_zero_snr',
  'zero_terminal_snr',
  'prediction_type',
  'parameterization',
  'objective',
  'v_parameterization',
  'timestep_spacing',
  'steps_offset',
  'num_inference_steps',
  'sampling_steps',
  'sample_steps',
  'guidance_scale',
  'cfg_scale',
  'guidance_rescale',
  'cfg_rescale',
  'noise_offset',
  'offset_noise',
  'snr_gamma',
  'min_snr_gamma',
  'clip_sample',
  'thresholding',
  'sigma_min',
  'sigma_max',
  'rho',
  'shift',
  'flow_shift',
  'resolution',
  'image_size',
  'sampler',
  'sampler_name',
  'scheduler',
  'use_karras_sigmas',
  'numTrainTimesteps',
  'betaSchedule',
  'predictionType',
  'model.params.timesteps',
  'noise_scheduler.beta_schedule',
] as const;

/** Keys that trip naive object lookups (prototype members) or YAML specials. */
const HOSTILE_KEYS = ['__proto__', 'constructor', 'prototype', 'toString', 'hasOwnProperty', '<<', '', ' ', '-', '?', '#', ':', '&a', '*a', '!!str'];

const ENUM_VALUES = [
  'linear',
  'scaled_linear',
  'cosine',
  'squaredcos_cap_v2',
  'sigmoid',
  'scaled-linaer',
  'LINEAR',
  'epsilon',
  'eps',
  'noise',
  'v_prediction',
  'v',
  'velocity',
  'sample',
  'x0',
  'x_start',
  'flow',
  'flow_matching',
  'leading',
  'linspace',
  'trailing',
  'trailling',
  'Trailing',
  'uniform',
  'quad',
  'ddim',
  'ddpm',
  'euler',
  'euler_a',
  'heun',
  'dpmpp_2m',
  'lms',
  'unipc',
  'DDIMScheduler',
  'EulerDiscreteScheduler',
];

/** A scalar written two ways: as YAML and as JSON (JSON may be deliberately invalid). */
export interface Token {
  yaml: string;
  json: string;
}

export type GenNode =
  { t: 'scalar'; token: Token } | { t: 'map'; flow: boolean; entries: [string, GenNode][] } | { t: 'list'; flow: boolean; items: GenNode[] };

const tok = (yaml: string, json = yaml): Token => ({ yaml, json });

const quoteJson = (s: string): string => JSON.stringify(s);

const specialNumber: fc.Arbitrary<Token> = fc.constantFrom(
  tok('.nan', 'NaN'),
  tok('.NaN', '"NaN"'),
  tok('NaN', 'NaN'),
  tok('.inf', '1e999'),
  tok('-.inf', '-1e999'),
  tok('Infinity', 'Infinity'),
  tok('+.inf', '"Infinity"'),
  tok('1e308'),
  tok('1.7976931348623157e308'),
  tok('-1.7976931348623157e308'),
  tok('1e309'),
  tok('5e-324'),
  tok('-0'),
  tok('-0.0'),
  tok('0'),
  tok('1'),
  tok('2'),
  tok('-1'),
  tok('123456789012345678901234567890'),
  tok('9007199254740993'),
  tok('1e12'),
  tok('1000000000000'),
  tok('100000'),
  tok('100001'),
  tok('1000'),
  tok('999'),
  tok('50'),
  tok('10'),
  tok('0.7'),
  tok('7.5'),
  tok('1.0'),
  tok('0.00085'),
  tok('0.012'),
  tok('0.0001'),
  tok('0.02'),
  tok('0.999'),
  tok('1.5'),
  tok('-0.5'),
  tok('0x10', '16'),
  tok('0o17', '15'),
  tok('1_000', '"1_000"'),
  tok('1e-4'),
  tok('.5', '0.5'),
);

const doubleToken: fc.Arbitrary<Token> = fc.double().map((d) => {
  if (Number.isNaN(d)) return tok('.nan', 'NaN');
  if (d === Infinity) return tok('.inf', '1e999');
  if (d === -Infinity) return tok('-.inf', '-1e999');
  const s = Object.is(d, -0) ? '-0' : String(d);
  return tok(s);
});

const intToken: fc.Arbitrary<Token> = fc
  .oneof(fc.integer({ min: -5, max: 2000 }), fc.integer(), fc.bigInt({ min: -(10n ** 40n), max: 10n ** 40n }))
  .map((n) => tok(String(n)));

const boolToken: fc.Arbitrary<Token> = fc.constantFrom(
  tok('true'),
  tok('false'),
  tok('True', 'true'),
  tok('yes', '"yes"'),
  tok('no', '"no"'),
  tok('on', '"on"'),
  tok('null'),
  tok('~', 'null'),
  tok('', 'null'),
);

const enumToken: fc.Arbitrary<Token> = fc
  .constantFrom(...ENUM_VALUES)
  .chain((v) => fc.constantFrom(tok(v, quoteJson(v)), tok(`"${v}"`, quoteJson(v)), tok(`'${v}'`, quoteJson(v)), tok(`${v} `, quoteJson(`${v} `))));

const loneSurrogate = fc.integer({ min: 0xd800, max: 0xdfff }).map((c) => String.fromCharCode(c));

const textString: fc.Arbitrary<string> = fc.oneof(
  fc.string({ maxLength: 20 }),
  fc.string({ unit: 'grapheme', maxLength: 20 }),
  fc.string({ unit: 'binary', maxLength: 20 }),
  fc.tuple(fc.string({ maxLength: 4 }), loneSurrogate, fc.string({ maxLength: 4 })).map(([a, s, b]) => a + s + b),
  fc.constantFrom(
    'Lanternfish Pictures',
    'storyboard-night-v3',
    'a: b',
    '- x',
    '{',
    '[',
    '"',
    "'",
    '#',
    '\t',
    '\\',
    '\u2028',
    '\u0085',
    '\ufeff',
    '\u0000',
    '&anchor',
    '*alias',
    '!!python/object/apply:os.system',
  ),
  fc.integer({ min: 200, max: 5_000 }).map((n) => 'x'.repeat(n)),
);

const stringToken: fc.Arbitrary<Token> = textString.chain((s) =>
  fc.constantFrom(
    tok(quoteJson(s)), // JSON strings are YAML double-quoted strings
    tok(`'${s.replace(/'/g, "''")}'`, quoteJson(s)),
    tok(s, quoteJson(s)), // plain: may well be a YAML syntax error, which is the point
  ),
);

export const scalarToken: fc.Arbitrary<Token> = fc.oneof(
  { weight: 4, arbitrary: specialNumber },
  { weight: 2, arbitrary: doubleToken },
  { weight: 2, arbitrary: intToken },
  { weight: 2, arbitrary: boolToken },
  { weight: 4, arbitrary: enumToken },
  { weight: 2, arbitrary: stringToken },
);

export const keyArb: fc.Arbitrary<string> = fc.oneof(
  { weight: 8, arbitrary: fc.constantFrom(...CONCEPT_KEYS) },
  { weight: 2, arbitrary: fc.constantFrom(...HOSTILE_KEYS) },
  { weight: 2, arbitrary: fc.string({ minLength: 1, maxLength: 12 }) },
  { weight: 1, arbitrary: fc.string({ unit: 'grapheme', minLength: 1, maxLength: 8 }) },
  { weight: 2, arbitrary: fc.constantFrom('model', 'params', 'noise_scheduler', 'scheduler_config', 'train', 'sample', 'run') },
);

/** A beta list: usually plausible, sometimes hostile. */
const betaList: fc.Arbitrary<GenNode> = fc
  .tuple(fc.integer({ min: 0, max: 60 }), fc.oneof(fc.constant('linear'), fc.constant('hostile')), fc.boolean())
  .chain(([n, mode, flow]) =>
    (mode === 'linear'
      ? fc.constant(Array.from({ length: n }, (_, i) => tok(String(1e-4 + ((0.02 - 1e-4) * i) / Math.max(1, n - 1)))))
      : fc.array(scalarToken, { maxLength: n })
    ).map((tokens): GenNode => ({ t: 'list', flow, items: tokens.map((token) => ({ t: 'scalar', token })) })),
  );

const { node } = fc.letrec<{ node: GenNode; map: GenNode; list: GenNode }>((tie) => ({
  node: fc.oneof(
    { depthSize: 'small', withCrossShrink: true },
    { weight: 6, arbitrary: scalarToken.map((token): GenNode => ({ t: 'scalar', token })) },
    { weight: 2, arbitrary: tie('map') },
    { weight: 1, arbitrary: tie('list') },
    { weight: 1, arbitrary: betaList },
  ),
  map: fc
    .tuple(fc.boolean(), fc.array(fc.tuple(keyArb, tie('node')), { maxLength: 8 }), fc.integer({ min: 0, max: 9 }))
    .map(([flowish, entries, f]): GenNode => ({ t: 'map', flow: flowish && f < 3, entries })),
  list: fc
    .tuple(fc.integer({ min: 0, max: 9 }), fc.array(tie('node'), { maxLength: 6 }))
    .map(([f, items]): GenNode => ({ t: 'list', flow: f < 4, items })),
}));

/** A document root: a map whose entries lean towards concept keys. */
export const rootArb: fc.Arbitrary<GenNode> = fc
  .array(fc.tuple(keyArb, node), { minLength: 0, maxLength: 14 })
  .map((entries): GenNode => ({ t: 'map', flow: false, entries }));

// ---------------------------------------------------------------- rendering

const PLAIN_KEY = /^[A-Za-z_][A-Za-z0-9_.-]*$/;

function yamlKey(k: string): string {
  return PLAIN_KEY.test(k) ? k : quoteJson(k);
}

function yamlFlow(n: GenNode): string {
  switch (n.t) {
    case 'scalar':
      return n.token.yaml === '' ? 'null' : n.token.yaml;
    case 'list':
      return `[${n.items.map(yamlFlow).join(', ')}]`;
    case 'map':
      return `{${n.entries.map(([k, v]) => `${yamlKey(k)}: ${yamlFlow(v)}`).join(', ')}}`;
  }
}

function yamlBlock(n: GenNode, indent: number, comments: boolean): string[] {
  const pad = ' '.repeat(indent);
  if (n.t === 'scalar') return [pad + n.token.yaml];
  if (n.flow || (n.t === 'map' ? n.entries.length === 0 : n.items.length === 0)) return [pad + yamlFlow(n)];
  const lines: string[] = [];
  if (n.t === 'map') {
    n.entries.forEach(([k, v], i) => {
      if (comments && i % 3 === 1) lines.push(`${pad}# Lanternfish Pictures note ${i}`);
      const head = `${pad}${yamlKey(k)}:`;
      if (v.t === 'scalar' || v.flow || (v.t === 'map' ? v.entries.length === 0 : v.items.length === 0)) {
        const inline = yamlFlow(v);
        lines.push(`${head} ${inline}${comments && i % 4 === 2 ? '  # trailing' : ''}`);
      } else {
        lines.push(head, ...yamlBlock(v, indent + 2, comments));
      }
    });
  } else {
    for (const item of n.items) {
      if (item.t === 'scalar' || item.flow) lines.push(`${pad}- ${yamlFlow(item)}`);
      else {
        const inner = yamlBlock(item, indent + 2, comments);
        if (inner.length === 0) lines.push(`${pad}- null`);
        else lines.push(`${pad}- ${inner[0]!.slice(indent + 2)}`, ...inner.slice(1));
      }
    }
  }
  return lines;
}

function jsonText(n: GenNode, indent: number, jsonc: boolean): string {
  const pad = '  '.repeat(indent + 1);
  const close = '  '.repeat(indent);
  const trailing = jsonc && indent % 2 === 0 ? ',' : '';
  switch (n.t) {
    case 'scalar':
      return n.token.json;
    case 'list':
      if (n.items.length === 0) return '[]';
      return `[\n${n.items.map((v) => pad + jsonText(v, indent + 1, jsonc)).join(',\n')}${trailing}\n${close}]`;
    case 'map':
      if (n.entries.length === 0) return '{}';
      return `{\n${n.entries
        .map(
          ([k, v], i) =>
            `${jsonc && i % 3 === 1 ? `${pad}// Lanternfish Pictures note\n` : ''}${pad}${quoteJson(k)}: ${jsonText(v, indent + 1, jsonc)}${jsonc && i % 4 === 2 ? ' /* c */' : ''}`,
        )
        .join(',\n')}${trailing}\n${close}}`;
  }
}

export interface RenderOptions {
  format: SourceFormat;
  crlf: boolean;
  bom: boolean;
  comments: boolean;
  /** Extra YAML documents (multi-document files). */
  extraDocs: GenNode[];
}

export function render(root: GenNode, o: RenderOptions): string {
  let text: string;
  if (o.format === 'yaml') {
    const docs = [root, ...o.extraDocs].map((d) => yamlBlock(d, 0, o.comments).join('\n'));
    text = docs.join('\n---\n') + '\n';
  } else {
    text = jsonText(root, 0, o.format === 'jsonc') + '\n';
  }
  if (o.crlf) text = text.replace(/\r?\n/g, '\r\n');
  if (o.bom) text = '\ufeff' + text;
  return text;
}

// ---------------------------------------------------------------- mutation

export type Mutation =
  | { kind: 'delete'; at: number; len: number }
  | { kind: 'insert'; at: number; text: string }
  | { kind: 'duplicate'; at: number; len: number }
  | { kind: 'swap-ending'; at: number };

const SYNTAX_BITS = [
  ':',
  ': ',
  '{',
  '}',
  '[',
  ']',
  ',',
  '"',
  "'",
  '#',
  '- ',
  '\n',
  '\r\n',
  '\r',
  '\t',
  '  ',
  '&a ',
  '*a',
  '<<: *a',
  '!!binary ',
  '!!python/object/apply:os.system ',
  '? ',
  '|',
  '>',
  '---\n',
  '...\n',
  '%YAML 1.1\n',
  '\\',
  '/*',
  '//',
  '\ufeff',
  '\u0000',
  '\ud800',
  'NaN',
  '.inf',
  '1e999',
];

const mutationArb: fc.Arbitrary<Mutation> = fc.oneof(
  fc.record({ kind: fc.constant('delete' as const), at: fc.nat(), len: fc.integer({ min: 1, max: 12 }) }),
  fc.record({
    kind: fc.constant('insert' as const),
    at: fc.nat(),
    text: fc.oneof(fc.constantFrom(...SYNTAX_BITS), fc.string({ unit: 'binary', maxLength: 4 })),
  }),
  fc.record({ kind: fc.constant('duplicate' as const), at: fc.nat(), len: fc.integer({ min: 1, max: 40 }) }),
  fc.record({ kind: fc.constant('swap-ending' as const), at: fc.nat() }),
);

export function mutate(text: string, mutations: Mutation[]): string {
  let out = text;
  for (const m of mutations) {
    const at = out.length === 0 ? 0 : m.at % (out.length + 1);
    switch (m.kind) {
      case 'delete':
        out = out.slice(0, at) + out.slice(at + m.len);
        break;
      case 'insert':
        out = out.slice(0, at) + m.text + out.slice(at);
        break;
      case 'duplicate':
        out = out.slice(0, at) + out.slice(at, at + m.len) + out.slice(at);
        break;
      case 'swap-ending': {
        const nl = out.indexOf('\n', at);
        if (nl > 0) out = out[nl - 1] === '\r' ? out.slice(0, nl - 1) + out.slice(nl) : out.slice(0, nl) + '\r' + out.slice(nl);
        break;
      }
    }
  }
  return out;
}

export interface GeneratedConfig {
  format: SourceFormat;
  path: string;
  text: string;
}

const EXT: Record<SourceFormat, string> = { yaml: 'yaml', json: 'json', jsonc: 'jsonc', toml: 'toml' };

/** A well-formed (as far as the renderer goes) config in one of the three formats. */
export const configArb: fc.Arbitrary<GeneratedConfig> = fc
  .record({
    format: fc.constantFrom<SourceFormat>('yaml', 'yaml', 'json', 'jsonc'),
    root: rootArb,
    crlf: fc.boolean(),
    bom: fc.integer({ min: 0, max: 5 }).map((n) => n === 0),
    comments: fc.boolean(),
    extraDocs: fc.array(rootArb, { maxLength: 2 }),
    dir: fc.constantFrom('', 'configs/', 'lanternfish/train/', 'sampling/'),
  })
  .map(({ format, root, crlf, bom, comments, extraDocs, dir }) => ({
    format,
    path: `${dir}run-${format}.${EXT[format]}`,
    text: render(root, { format, crlf, bom, comments, extraDocs: format === 'yaml' ? extraDocs : [] }),
  }));

/** Realistic Lanternfish Pictures configs (invented demo data) as mutation seeds. */
export const SEED_CONFIGS: GeneratedConfig[] = [
  {
    format: 'yaml',
    path: 'lanternfish/train/night-storyboard.yaml',
    text: `# Lanternfish Pictures: night storyboard fine-tune (invented demo data)
run: storyboard-night-v3
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  prediction_type: epsilon
  rescale_betas_zero_snr: true
training:
  noise_offset: 0.1
  snr_gamma: 5.0
  resolution: 1024
sampling:
  timestep_spacing: leading
  steps_offset: 1
  num_inference_steps: 30
  guidance_scale: 7.5
`,
  },
  {
    format: 'json',
    path: 'lanternfish/sample/product-stills.json',
    text: `{
  "num_train_timesteps": 1000,
  "beta_schedule": "linear",
  "beta_start": 0.0001,
  "beta_end": 0.02,
  "prediction_type": "v_prediction",
  "timestep_spacing": "linspace",
  "num_inference_steps": 8,
  "guidance_scale": 9.0,
  "guidance_rescale": 1.5,
  "clip_sample": true
}
`,
  },
  {
    format: 'jsonc',
    path: 'lanternfish/sample/karras.jsonc',
    text: `{
  // Lanternfish Pictures: product stills sampler
  "scheduler": { "num_train_timesteps": 1000, "beta_schedule": "squaredcos_cap_v2", "rescale_betas_zero_snr": true, },
  "sampler": "euler", "use_karras_sigmas": true,
  "num_inference_steps": 1001, /* more than T */
  "trained_betas": [0.1, 0.2, 1.0, 2.0],
}
`,
  },
];

function seedConfigArb(): fc.Arbitrary<GeneratedConfig> {
  return fc.tuple(fc.constantFrom(...SEED_CONFIGS), fc.boolean(), fc.boolean()).map(([c, crlf, bom]) => {
    let text = c.text;
    if (crlf) text = text.replace(/\r?\n/g, '\r\n');
    if (bom) text = '\ufeff' + text;
    return { ...c, text };
  });
}

/** The same, then mangled by a few random edits. */
export const mutatedConfigArb: fc.Arbitrary<GeneratedConfig> = fc
  .tuple(fc.oneof(configArb, seedConfigArb()), fc.array(mutationArb, { minLength: 1, maxLength: 6 }))
  .map(([c, ms]) => ({ ...c, text: mutate(c.text, ms) }));

export const anyConfigArb: fc.Arbitrary<GeneratedConfig> = fc.oneof(
  { weight: 3, arbitrary: configArb },
  { weight: 1, arbitrary: seedConfigArb() },
  { weight: 3, arbitrary: mutatedConfigArb },
);

/** Keys a training file sets, and keys a sampling file sets (so that pairs have real roles). */
const TRAINING_KEYS = [
  'num_train_timesteps',
  'beta_schedule',
  'beta_start',
  'beta_end',
  'trained_betas',
  'rescale_betas_zero_snr',
  'prediction_type',
  'noise_offset',
  'snr_gamma',
] as const;
const SAMPLING_KEYS = [
  'num_train_timesteps',
  'beta_schedule',
  'prediction_type',
  'rescale_betas_zero_snr',
  'timestep_spacing',
  'steps_offset',
  'num_inference_steps',
  'guidance_scale',
  'guidance_rescale',
  'sampler',
] as const;

function roleConfig(keys: readonly string[], name: string): fc.Arbitrary<GeneratedConfig> {
  return fc
    .tuple(
      fc.constantFrom<SourceFormat>('yaml', 'json', 'jsonc'),
      fc.uniqueArray(fc.constantFrom(...keys), { minLength: 2, maxLength: keys.length }),
      fc.array(fc.oneof({ weight: 3, arbitrary: enumToken }, { weight: 3, arbitrary: specialNumber }, { weight: 1, arbitrary: boolToken }), {
        minLength: keys.length,
        maxLength: keys.length,
      }),
      fc.boolean(),
      fc.array(mutationArb, { maxLength: 2 }),
    )
    .map(([format, chosen, tokens, crlf, ms]) => {
      const root: GenNode = { t: 'map', flow: false, entries: chosen.map((k, i) => [k, { t: 'scalar', token: tokens[i]! }]) };
      const text = mutate(render(root, { format, crlf, bom: false, comments: true, extraDocs: [] }), ms);
      return { format, path: `lanternfish/pair/${name}.${EXT[format]}`, text };
    });
}

/** [sampling file, training file]. */
export const pairArb: fc.Arbitrary<[GeneratedConfig, GeneratedConfig]> = fc.tuple(
  roleConfig(SAMPLING_KEYS, 'sample-night'),
  roleConfig(TRAINING_KEYS, 'train-night'),
);
