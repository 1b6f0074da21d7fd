/**
 * The fast YAML reader (parse/fastYaml.ts) against the exact one (parse/yaml.ts): for every YAML
 * file of the repository's fixtures and examples, the benchmark corpus and generated configs, the
 * two give the same tree, problems, comments and suppressions, and the same findings. The exact
 * reader is the reference; the fast one must either agree or give up (and then the exact one
 * reads the file).
 */
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { renderConfig, samplingConfig, trainingConfig } from '../load/corpus';
import { analyzeText } from '../../server/src/engine/api';
import { formatFromPath, parseText, type SourceFormat } from '../../server/src/parse';
import { readJsonFast } from '../../server/src/parse/fastJson';
import { readYamlFast } from '../../server/src/parse/fastYaml';
import { coreScalar } from '../../server/src/parse/scalars';
import { resolveLimits } from '../../server/src/parse/shared';

const repo = join(__dirname, '..', '..');

function filesUnder(dir: string, exts: string, out: string[] = []): string[] {
  for (const name of readdirSync(dir)) {
    if (name === 'node_modules' || name === 'corpus' || name === 'artifacts') continue;
    const p = join(dir, name);
    if (statSync(p).isDirectory()) filesUnder(p, exts, out);
    else if (new RegExp(`\\.(${exts})$`, 'i').test(name)) out.push(p);
  }
  return out;
}

const takesFastPath = (text: string) => readYamlFast(text, resolveLimits(), coreScalar) !== null;

/** Everything but the text itself, with NaN made comparable. */
function comparable(text: string, exact: boolean, format: SourceFormat = 'yaml'): unknown {
  const parsed = parseText(text, format, undefined, { exact });
  return JSON.parse(
    JSON.stringify(
      {
        documents: parsed.documents,
        problems: parsed.problems,
        comments: parsed.comments,
        suppressions: parsed.suppressions,
        lineEnding: parsed.lineEnding,
      },
      (_k, v) => (typeof v === 'number' && !Number.isFinite(v) ? `number:${v}` : v),
    ),
  );
}

function expectSameReading(text: string, path = 'config.yaml'): void {
  const format = formatFromPath(path) ?? 'yaml';
  expect(comparable(text, false, format)).toEqual(comparable(text, true, format));
  const fast = analyzeText(text, { path });
  const exact = analyzeText(text, { path, parse: { exact: true } });
  expect(fast.findings).toEqual(exact.findings);
}

describe('fast YAML reader agrees with the exact reader', () => {
  const files = [...filesUnder(join(repo, 'test'), 'ya?ml'), ...filesUnder(join(repo, 'examples'), 'ya?ml')];

  it('on every YAML fixture and example of the repository', () => {
    let fast = 0;
    for (const file of files) {
      const text = readFileSync(file, 'utf8');
      if (takesFastPath(text)) fast++;
      expectSameReading(text, file);
    }
    // Most fixtures are ordinary configs: the fast reader must really be the one reading them.
    expect(files.length).toBeGreaterThan(50);
    expect(fast).toBeGreaterThan(files.length / 2);
  });

  it('on the benchmark corpus configs, all of which take the fast path', () => {
    for (let i = 0; i < 300; i++) {
      const text = renderConfig(i % 2 ? samplingConfig(i) : trainingConfig(i), 'yaml', i);
      expect(takesFastPath(text)).toBe(true);
      expectSameReading(text);
    }
  });

  it('on hand-picked shapes: duplicates, empty values, flow collections, quoting, comments', () => {
    const cases = [
      'a: 1\na: 2\n',
      'sched:\n  beta_schedule: linear\n  beta_schedule: cosine\n',
      'a:\nb: ~\nc: null\n',
      'a: {}\nb: []\nc: [ ]\nd: { x: 1 , }\n',
      'a: [1, [2, 3], {b: c}]  # after\n',
      "a: \"x # y\"  # real\nb: 'it''s'\n",
      '"k": 1\n\'q\': 2\n',
      'a: multi\n  line plain\nb: "multi\n  line quoted"\n',
      'list:\n- 1\n- two\n-   three\n',
      'n:\n  - a: 1\n    b: 2\n  - c: 3\n',
      '#only\na: 1 #x\n#tail',
      'a: 1e3\nb: 0x10\nc: .5\nd: +7\ne: 1_000\n',
      '1: one\ntrue: yes\n~: nothing\n',
      '[1, 2, 3]\n',
      'plain scalar root\n',
      'a: b\n\n\n',
      'a: 1\r\nb:\r\n  c: 2 # x\r\n',
    ];
    for (const text of cases) expectSameReading(text);
  });

  it('on a text past 512 KiB (a sweep of 40,000 entries), and leaves one that may hold a list past the limit', () => {
    const runs = Array.from({ length: 40_000 }, (_, i) => `  run_${i}: {lr: ${(i % 97) / 1e5}, tag: "night-${i}"}`);
    const text = `# Lanternfish Pictures sweep (invented demo data)\nnum_train_timesteps: 1000\nbeta_schedule: scaled_linear\nruns:\n${runs.join('\n')}\n`;
    expect(text.length).toBeGreaterThan(512 * 1024);
    expect(takesFastPath(text)).toBe(true);
    expectSameReading(text);
    // More commas and dashes than the list limit: the exact reader only, parsed once.
    const betas = `num_train_timesteps: 1000\ntrained_betas: [${Array(resolveLimits().maxListLength + 10)
      .fill('1e-4')
      .join(',')}]\n`;
    expect(takesFastPath(betas)).toBe(false);
  });

  it('gives up on the rare features it leaves to the exact reader', () => {
    const rare = [
      'a: &x 1\nb: *x\n',
      'base: &b {x: 1}\nrun:\n  <<: *b\n',
      'a: !!str 1\n',
      'a: 1\n---\nb: 2\n',
      '%YAML 1.2\n---\na: 1\n',
      '\uFEFFa: 1\n',
      'a: |\n  text\n',
      'a: [1, 2\n',
      'a:\n\t- 1\n',
      'a: 1\rb: 2\r',
      '- \n- 1\n',
      '? [a]\n: 1\n',
    ];
    for (const text of rare) {
      expect(takesFastPath(text), JSON.stringify(text)).toBe(false);
      // And the result is still the exact reader's.
      expect(comparable(text, false)).toEqual(comparable(text, true));
    }
  });

  it('on generated configs (property)', () => {
    const key = fc.constantFrom(
      'num_train_timesteps',
      'beta_schedule',
      'beta_start',
      'beta_end',
      'prediction_type',
      'timestep_spacing',
      'num_inference_steps',
      'guidance_scale',
      'guidance_rescale',
      'steps_offset',
      'sampler',
      'run',
      'lr',
      'notes',
      'rescale_betas_zero_snr',
      'noise_offset',
      '"quoted key"',
      "'single key'",
      'numTrainTimesteps',
      'a-b',
      '1',
      'true',
    );
    const scalar = fc.oneof(
      fc.constantFrom(
        '1000',
        '0.00085',
        '1e-4',
        '1.0e-4',
        '.5',
        '-0',
        '+12',
        '0x1F',
        '0o17',
        '1_000',
        '.inf',
        '-.Inf',
        '.nan',
        '~',
        'null',
        'Null',
        'true',
        'False',
        'yes',
        'off',
        'scaled_linear',
        'v_prediction',
        'trailing',
        'euler a',
        '007',
        '1.',
        '12:30',
        '"7.5"',
        "'it''s'",
        '"tab\\tand \\u00e9"',
        '""',
        "''",
        '"a # not a comment"',
        'x#y',
        '"multi word"',
      ),
      fc.integer({ min: -5, max: 5000 }).map(String),
      fc.double({ min: 0, max: 1, noNaN: true }).map(String),
    );
    const comment = fc.constantFrom('', '', '  # note', ' # noiselint: deliberate terminal-snr-leak because kept', ' #');
    type Tree = { [k: string]: Tree | string | string[] };
    const tree: fc.Arbitrary<Tree> = fc.letrec<{ t: Tree }>((tie) => ({
      t: fc.dictionary(key, fc.oneof({ depthSize: 'small' }, scalar, scalar, fc.array(scalar, { maxLength: 4 }), tie('t')), {
        minKeys: 1,
        maxKeys: 6,
      }),
    })).t;
    const render = (t: Tree, indent: number, comments: string[], flow: boolean): string => {
      const pad = ' '.repeat(indent);
      let k = 0;
      return Object.entries(t)
        .map(([name, v]) => {
          const c = comments[k++ % comments.length];
          if (typeof v === 'string') return `${pad}${name}: ${v}${c}`;
          if (Array.isArray(v)) {
            if (flow || v.length === 0) return `${pad}${name}: [${v.join(', ')}]${c}`;
            return `${pad}${name}:${c}\n${v.map((x) => `${pad}  - ${x}`).join('\n')}`;
          }
          if (flow)
            return `${pad}${name}: {${Object.entries(v)
              .map(([a, b]) => `${a}: ${typeof b === 'string' ? b : '1'}`)
              .join(', ')}}`;
          return `${pad}${name}:${c}\n${render(v, indent + 2, comments, flow)}`;
        })
        .join('\n');
    };
    let runs = 0;
    let fast = 0;
    fc.assert(
      fc.property(
        tree,
        fc.array(comment, { minLength: 1, maxLength: 4 }),
        fc.boolean(),
        fc.boolean(),
        fc.boolean(),
        (t, comments, flow, crlf, header) => {
          let text = `${header ? '# Lanternfish Pictures (generated)\n\n' : ''}${render(t, 0, comments, flow)}\n`;
          if (crlf) text = text.replace(/\n/g, '\r\n');
          runs++;
          if (takesFastPath(text)) fast++;
          expectSameReading(text);
        },
      ),
      { numRuns: 300, seed: 12 },
    );
    // The property is about the fast reader: most generated configs must reach it.
    expect(fast).toBeGreaterThan(runs * 0.6);
  });
});

describe('fast JSON reader agrees with the exact reader', () => {
  const takesFastJson = (text: string, format: SourceFormat) => readJsonFast(text, format, resolveLimits()) !== null;

  it('on every JSON and JSONC fixture and example of the repository', () => {
    const files = [...filesUnder(join(repo, 'test'), 'jsonc?'), ...filesUnder(join(repo, 'examples'), 'jsonc?')].filter(
      (f) => !f.endsWith('.expected.json'),
    );
    let fast = 0;
    for (const file of files) {
      const text = readFileSync(file, 'utf8');
      if (takesFastJson(text, formatFromPath(file)!)) fast++;
      expectSameReading(text, file);
    }
    expect(files.length).toBeGreaterThan(10);
    expect(fast).toBeGreaterThan(files.length / 2);
  });

  it('on the benchmark corpus configs, all of which take the fast path', () => {
    for (let i = 0; i < 200; i++) {
      const format = i % 3 === 0 ? 'jsonc' : 'json';
      const text = renderConfig(i % 2 ? samplingConfig(i) : trainingConfig(i), format, i);
      expect(takesFastJson(text, format)).toBe(true);
      expectSameReading(text, `config.${format}`);
    }
  });

  it('on a text past 512 KiB (40,000 entries)', () => {
    const runs = Array.from({ length: 40_000 }, (_, i) => `"run_${i}": {"lr": ${(i % 97) / 1e5}, "tag": "night-${i}"}`);
    const text = `{"num_train_timesteps": 1000, "beta_schedule": "scaled_linear", "runs": {${runs.join(', ')}}}`;
    expect(text.length).toBeGreaterThan(512 * 1024);
    expect(takesFastJson(text, 'json')).toBe(true);
    expectSameReading(text, 'config.json');
  });

  it('on hand-picked shapes, and gives up where the exact reader has something to say', () => {
    const same: [string, SourceFormat][] = [
      ['{"a": 1, "a": 2}', 'json'],
      ['{"k": "esc \\u00e9 \\n \\"q\\""}', 'json'],
      ['[1, -0, 1.5e-4, 1E3, true, false, null, "x"]', 'json'],
      ['{}', 'json'],
      ['[]', 'json'],
      ['  {"a": {"b": [ ]}}  \r\n', 'json'],
      ['// c\n{"a": 1, /* b */ "b": [1,],}\n', 'jsonc'],
      ['"just a string"', 'json'],
    ];
    for (const [text, format] of same) expectSameReading(text, `x.${format}`);
    const rare: [string, SourceFormat][] = [
      ['{"a": 1,}', 'json'],
      ['// c\n{"a": 1}', 'json'],
      ['{"a": NaN}', 'json'],
      ['{"a": 01}', 'json'],
      ['{"a" 1}', 'json'],
      ['{"a": 1', 'json'],
      ['\uFEFF{"a": 1}', 'json'],
      ['{"a":\u00a01}', 'json'],
      ['{"a": "tab\there"}', 'json'],
      ['', 'json'],
      ['{"a": 1} {"b": 2}', 'json'],
      ['[1 2]', 'json'],
      ['{"a": tru}', 'json'],
    ];
    for (const [text, format] of rare) {
      expect(takesFastJson(text, format), JSON.stringify(text)).toBe(false);
      expectSameReading(text, `x.${format}`);
    }
  });

  it('on generated JSON and JSONC (property)', () => {
    const value: fc.Arbitrary<unknown> = fc.letrec<{ v: unknown }>((tie) => ({
      v: fc.oneof(
        { depthSize: 'small' },
        fc.constantFrom(1000, 0.00085, 1e-4, -0, 7.5, 'scaled_linear', 'trailing', 'é ✓ "q"', '', true, false, null),
        fc.double({ noNaN: true, noDefaultInfinity: true }),
        fc.string({ maxLength: 8 }),
        fc.array(tie('v'), { maxLength: 4 }),
        fc.dictionary(fc.constantFrom('num_train_timesteps', 'beta_schedule', 'guidance_scale', 'run', 'a', 'A', 'x y'), tie('v'), { maxKeys: 5 }),
      ),
    })).v;
    let fast = 0;
    let runs = 0;
    fc.assert(
      fc.property(value, fc.constantFrom(0, 2, '\t'), fc.boolean(), (v, indent, jsonc) => {
        let text = JSON.stringify(v, null, indent);
        if (jsonc) text = `// generated\n${text.replace(/\n/, ' /* note */\n')}`;
        const format: SourceFormat = jsonc ? 'jsonc' : 'json';
        runs++;
        if (takesFastJson(text, format)) fast++;
        expectSameReading(text, `gen.${format}`);
      }),
      { numRuns: 300, seed: 21 },
    );
    expect(fast).toBeGreaterThan(runs * 0.5);
  });
});
