/**
 * Property: a correct file stays free of errors and warnings under reformatting. Every clean
 * scheduler config (and, below, every clean config-object and latent-diffusion file) of the corpus is rewritten with its keys shuffled (seeded), compact or
 * indented JSON, and as YAML in block and in flow style with plain or quoted strings; none of the
 * rewrites may give an error or a warning, and the consumer decision must not change. The clean
 * argument sets (training-args, pixel-args) get the same rewrites plus TOML: flat, and for the
 * sd-scripts arguments spread over tables, which its loader merges into one namespace.
 */
import { describe, expect, it } from 'vitest';
import { analyzeText } from '../../server/src/engine/api';
import { parse as parseYaml } from 'yaml';
import { corpusFiles, loadSection } from './corpus';

function rng(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (s * 1664525 + 1013904223) >>> 0;
    return s / 2 ** 32;
  };
}

/** Python's json reads these tokens; YAML spells them .inf / .nan. */
function parsePythonJson(text: string): Record<string, unknown> {
  return JSON.parse(
    text
      .replace(/-Infinity/g, '"__-inf"')
      .replace(/\bInfinity\b/g, '"__inf"')
      .replace(/\bNaN\b/g, '"__nan"'),
  );
}

function yamlScalar(v: unknown, quote: boolean): string {
  if (v === '__-inf') return '-.inf';
  if (v === '__inf') return '.inf';
  if (v === '__nan') return '.nan';
  if (v === null) return 'null';
  if (typeof v === 'string')
    return quote ? JSON.stringify(v) : /^[A-Za-z_][\w.]*$/.test(v) && !/^(yes|no|on|off|true|false|null)$/i.test(v) ? v : JSON.stringify(v);
  if (typeof v === 'number')
    return Number.isInteger(v)
      ? String(v)
      : String(v).includes('e')
        ? v
            .toExponential()
            .replace(/e([-+])/, '.0e$1')
            .replace(/\.(\d+)\.0e/, '.$1e')
        : String(v);
  if (Array.isArray(v)) return `[${v.map((x) => yamlScalar(x, quote)).join(', ')}]`;
  return JSON.stringify(v);
}

function jsonValue(v: unknown): string {
  if (v === '__-inf') return '-Infinity';
  if (v === '__inf') return 'Infinity';
  if (v === '__nan') return 'NaN';
  return JSON.stringify(v);
}

function rewrites(text: string, seed: number): { name: string; text: string; path: string }[] {
  const data = parsePythonJson(text);
  const r = rng(seed);
  const keys = Object.keys(data);
  const shuffled = [...keys].sort(() => r() - 0.5);
  const json = (ks: string[], indent: string) =>
    indent === ''
      ? `{${ks.map((k) => `${JSON.stringify(k)}:${jsonValue(data[k])}`).join(',')}}`
      : `{\n${ks.map((k) => `${indent}${JSON.stringify(k)}: ${jsonValue(data[k])}`).join(',\n')}\n}\n`;
  return [
    { name: 'shuffled, 4 spaces', text: json(shuffled, '    '), path: 'scheduler_config.json' },
    { name: 'compact', text: json(keys, ''), path: 'scheduler_config.json' },
    {
      name: 'YAML block, plain strings',
      text: `# Lanternfish Pictures: YAML copy\n${shuffled.map((k) => `${k}: ${yamlScalar(data[k], false)}`).join('\n')}\n`,
      path: 'scheduler.yaml',
    },
    { name: 'YAML block, quoted strings', text: keys.map((k) => `${k}: ${yamlScalar(data[k], true)}`).join('\n') + '\n', path: 'scheduler.yaml' },
    { name: 'YAML flow', text: `{${shuffled.map((k) => `${k}: ${yamlScalar(data[k], true)}`).join(', ')}}\n`, path: 'scheduler.yaml' },
  ];
}

const clean = corpusFiles().filter((f) => f.kind === 'clean' && f.family === 'scheduler-config' && f.path.endsWith('.json'));

describe('reformatting a clean scheduler config keeps it clean', () => {
  it('has clean files to reformat', () => expect(clean.length).toBeGreaterThan(5));
  it.each(clean.map((f) => [f.name, f] as const))('%s', (_name, file) => {
    const base = analyzeText(file.text, { path: file.path }).documents[0]!.setup.consumer!.decision;
    for (let seed = 1; seed <= 3; seed++) {
      for (const variant of rewrites(file.text, seed)) {
        const result = analyzeText(variant.text, { path: `/studio/${variant.path}` });
        const loud = result.findings.filter((x) => x.severity === 'error' || x.severity === 'warning');
        expect(loud.map((x) => `${variant.name}: ${x.rule}: ${x.message}`)).toEqual([]);
        expect(result.documents[0]!.setup.consumer?.decision.className, variant.name).toBe(base.className);
      }
    }
  });
});

/**
 * The nested families (config-object, latent-diffusion; the latter YAML only, as OmegaConf reads it): the clean YAML file is read with the yaml package (a
 * general-purpose YAML 1.2 reader, independent of this tool's parser) and written again with the
 * keys of every map shuffled (seeded), in block style with plain or quoted strings, in flow style,
 * and as JSON. Sub-configs keep their place: only the order and the spelling of the text change.
 */
function nestedRewrites(text: string, seed: number): { name: string; text: string; path: string }[] {
  const data = parseYaml(text) as unknown;
  const r = rng(seed);
  const order = (keys: string[]) => [...keys].sort(() => r() - 0.5);
  const block = (v: unknown, indent: string, quote: boolean): string => {
    if (v && typeof v === 'object' && !Array.isArray(v)) {
      const keys = order(Object.keys(v));
      if (keys.length === 0) return ' {}';
      return keys
        .map((k) => {
          const x = (v as Record<string, unknown>)[k];
          const nested = x && typeof x === 'object' && (!Array.isArray(x) || x.some((i) => i && typeof i === 'object'));
          return `\n${indent}${k}:${nested ? block(x, `${indent}  `, quote) : ` ${yamlScalar(x, quote)}`}`;
        })
        .join('');
    }
    if (Array.isArray(v))
      return v.map((x) => `\n${indent}-${x && typeof x === 'object' ? flow(x, quote).replace(/^/, ' ') : ` ${yamlScalar(x, quote)}`}`).join('');
    return ` ${yamlScalar(v, quote)}`;
  };
  const flow = (v: unknown, quote: boolean): string => {
    if (Array.isArray(v)) return `[${v.map((x) => flow(x, quote)).join(', ')}]`;
    if (v && typeof v === 'object') {
      return `{${order(Object.keys(v))
        .map((k) => `${k}: ${flow((v as Record<string, unknown>)[k], quote)}`)
        .join(', ')}}`;
    }
    return yamlScalar(v, quote);
  };
  const json = (v: unknown): string => {
    if (Array.isArray(v)) return `[${v.map(json).join(', ')}]`;
    if (v && typeof v === 'object')
      return `{${order(Object.keys(v))
        .map((k) => `${JSON.stringify(k)}: ${json((v as Record<string, unknown>)[k])}`)
        .join(', ')}}`;
    return JSON.stringify(v);
  };
  return [
    { name: 'YAML block, plain strings, shuffled', text: `# Lanternfish Pictures: reformatted${block(data, '', false)}\n`, path: 'engine.yaml' },
    { name: 'YAML block, quoted strings, shuffled', text: `${block(data, '', true).slice(1)}\n`, path: 'engine.yaml' },
    { name: 'YAML flow', text: `${flow(data, true)}\n`, path: 'engine.yaml' },
    { name: 'JSON', text: `${json(data)}\n`, path: 'engine.json' },
  ];
}

// YAML files read through OmegaConf: latent-diffusion configs, and schedulers instantiated from a
// nested map by Hydra (scheduler-config in YAML).
const omegaconfYaml = (f: { family: string; path: string }) =>
  f.family === 'latent-diffusion' || (f.family === 'scheduler-config' && f.path.endsWith('.yaml'));
const nestedClean = corpusFiles().filter((f) => f.kind === 'clean' && (f.family === 'config-object' || omegaconfYaml(f)));

describe('reformatting a clean config-object or latent-diffusion file keeps it clean', () => {
  it('has clean files to reformat', () => {
    expect(nestedClean.filter((f) => f.family === 'config-object').length).toBeGreaterThanOrEqual(3);
    expect(nestedClean.filter((f) => f.family === 'latent-diffusion').length).toBeGreaterThanOrEqual(2);
  });
  it.each(nestedClean.map((f) => [`${f.family}/${f.name}`, f] as const))('%s', (_name, file) => {
    const base = analyzeText(file.text, { path: file.path });
    const decision = base.documents[0]!.setup.consumer!.decision;
    const fields = (r: typeof base) => Object.fromEntries(Object.entries(r.documents[0]!.setup.fields).map(([k, f]) => [k, JSON.stringify(f.value)]));
    for (let seed = 1; seed <= 3; seed++) {
      // OmegaConf loads YAML only: no JSON variant for those files.
      const variants = nestedRewrites(file.text, seed).filter((v) => !omegaconfYaml(file) || !v.path.endsWith('.json'));
      for (const variant of variants) {
        const result = analyzeText(variant.text, { path: `/studio/${variant.path}` });
        const loud = result.findings.filter((x) => x.severity === 'error' || x.severity === 'warning');
        expect(loud.map((x) => `${variant.name}: ${x.rule}: ${x.message}`)).toEqual([]);
        expect(result.documents[0]!.setup.consumer?.decision.className, variant.name).toBe(decision.className);
        // The same values reach the setup, whatever the layout.
        expect(fields(result), variant.name).toEqual(fields(base));
        expect(result.findings.map((x) => x.rule).sort(), variant.name).toEqual(base.findings.map((x) => x.rule).sort());
      }
    }
  });
});

function tomlValue(v: unknown): string {
  if (typeof v === 'string') return JSON.stringify(v);
  if (typeof v === 'number') return Number.isInteger(v) ? String(v) : String(v).includes('e') ? String(v) : String(v);
  if (typeof v === 'boolean') return String(v);
  if (Array.isArray(v)) return `[${v.map(tomlValue).join(', ')}]`;
  return JSON.stringify(v);
}

function argsRewrites(values: Record<string, unknown>, seed: number, sections: boolean): { name: string; text: string; path: string }[] {
  const r = rng(seed);
  const keys = Object.keys(values);
  const shuffled = [...keys].sort(() => r() - 0.5);
  // TOML has no null: an argument left at None is simply absent. Tables merged into one namespace
  // only for the scripts whose loader merges them (sd-scripts' --config_file).
  const present = shuffled.filter((k) => values[k] !== null);
  const out = [
    {
      name: 'JSON, shuffled',
      text: `{\n${shuffled.map((k) => `  ${JSON.stringify(k)}: ${JSON.stringify(values[k])}`).join(',\n')}\n}\n`,
      path: 'args.json',
    },
    { name: 'JSON, compact', text: JSON.stringify(values), path: 'args.json' },
    { name: 'YAML block, plain strings', text: shuffled.map((k) => `${k}: ${yamlScalar(values[k], false)}`).join('\n') + '\n', path: 'args.yaml' },
    { name: 'YAML block, quoted strings', text: keys.map((k) => `${k}: ${yamlScalar(values[k], true)}`).join('\n') + '\n', path: 'args.yaml' },
    { name: 'YAML flow', text: `{${shuffled.map((k) => `${k}: ${yamlScalar(values[k], true)}`).join(', ')}}\n`, path: 'args.yaml' },
    { name: 'TOML, flat', text: present.map((k) => `${k} = ${tomlValue(values[k])}`).join('\n') + '\n', path: 'args.toml' },
  ];
  if (sections) {
    const tables = ['model_arguments', 'training_arguments', 'sample_prompt_arguments'];
    const body = tables
      .map(
        (t, i) =>
          `[${t}]\n${present
            .filter((_k, j) => j % tables.length === i)
            .map((k) => `${k} = ${tomlValue(values[k])}`)
            .join('\n')}\n`,
      )
      .join('\n');
    out.push({ name: 'TOML, spread over tables', text: `# Lanternfish Pictures: reformatted\n${body}`, path: 'args.toml' });
  }
  return out;
}

const cleanArgs = corpusFiles().filter((f) => f.kind === 'clean' && (f.family === 'training-args' || f.family === 'pixel-args'));

describe('reformatting a clean argument set keeps it clean', () => {
  it('has clean argument sets of both families', () => {
    expect(new Set(cleanArgs.map((f) => f.family))).toEqual(new Set(['training-args', 'pixel-args']));
  });
  it.each(cleanArgs.map((f) => [`${f.family}/${f.name}`, f] as const))('%s', (_name, file) => {
    const base = analyzeText(file.text, { path: file.path }).documents[0]!.setup.consumer!.decision;
    const { values } = loadSection(file.text, file.path);
    for (let seed = 1; seed <= 3; seed++) {
      for (const variant of argsRewrites(values, seed, base.className === 'sd-scripts')) {
        const result = analyzeText(variant.text, { path: `/studio/${variant.path}` });
        const loud = result.findings.filter((x) => x.severity === 'error' || x.severity === 'warning');
        expect(loud.map((x) => `${variant.name}: ${x.rule}: ${x.message}`)).toEqual([]);
        const decision = result.documents[0]!.setup.consumer?.decision;
        expect([decision?.family, decision?.className], variant.name).toEqual([base.family, base.className]);
        expect(result.isDiffusionConfig, variant.name).toBe(true);
      }
    }
  });
});
