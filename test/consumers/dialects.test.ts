/**
 * Loader dialects: each raw scalar is typed as its loader types it. The expectations are the
 * loaders' documented behaviour (PyYAML 6 implicit resolvers, YAML 1.1; OmegaConf 2.3's extra
 * float resolver; Python's json with NaN/Infinity; YAML 1.2 core schema for the generic reading).
 * Where python3 with PyYAML is installed, the PyYAML table is also checked against the real loader.
 */
import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { genericDialect, omegaconfDialect, pythonJsonDialect, pyyamlDialect } from '../../server/src/consumers/dialects';
import { parseText } from '../../server/src/parse';

const plainOf = (dialect: typeof pyyamlDialect, text: string) => dialect.typeScalar({ source: text, style: 'plain' });

// [text, PyYAML kind, PyYAML value] (PyYAML 6.0 resolver.py, recalled from memory; checked below when installed)
const PYYAML_TABLE: [string, string, unknown][] = [
  ['1e-4', 'str', '1e-4'],
  ['1.0e-4', 'float', 1e-4],
  ['1.0e4', 'str', '1.0e4'],
  ['0.00085', 'float', 0.00085],
  ['1_000', 'int', 1000],
  ['1000', 'int', 1000],
  ['010', 'int', 8],
  ['0x1F', 'int', 31],
  ['yes', 'bool', true],
  ['No', 'bool', false],
  ['on', 'bool', true],
  ['OFF', 'bool', false],
  ['true', 'bool', true],
  ['~', 'null', null],
  ['null', 'null', null],
  ['.inf', 'float', Infinity],
  ['-.inf', 'float', -Infinity],
  ['.5', 'float', 0.5],
  ['scaled_linear', 'str', 'scaled_linear'],
  ['768,768', 'str', '768,768'],
  ['1:30', 'int', 90],
];

describe('PyYAML dialect (YAML 1.1)', () => {
  it.each(PYYAML_TABLE)('%s -> %s', (text, kind, value) => {
    const t = plainOf(pyyamlDialect, text);
    expect(t.kind).toBe(kind);
    expect(t.value).toEqual(value);
  });

  let python = false;
  try {
    execFileSync('python3', ['-c', 'import yaml'], { stdio: 'ignore' });
    python = true;
  } catch {
    python = false;
  }
  it.skipIf(!python)('agrees with the real PyYAML safe loader on the whole table', () => {
    const script =
      'import sys, yaml, json, math\n' +
      'out = []\n' +
      'for line in sys.stdin.read().split("\\n"):\n' +
      '    v = yaml.safe_load("k: " + line)["k"]\n' +
      '    kind = {bool: "bool", int: "int", float: "float", str: "str", type(None): "null"}[type(v)]\n' +
      '    out.append([kind, v if not (isinstance(v, float) and math.isinf(v)) else ("inf" if v > 0 else "-inf")])\n' +
      'print(json.dumps(out))\n';
    const got = JSON.parse(execFileSync('python3', ['-c', script], { input: PYYAML_TABLE.map((r) => r[0]).join('\n') }).toString());
    const ours = PYYAML_TABLE.map(([text]) => {
      const t = plainOf(pyyamlDialect, text);
      return [t.kind, t.value === Infinity ? 'inf' : t.value === -Infinity ? '-inf' : t.value];
    });
    expect(ours).toEqual(got);
  });
});

describe('OmegaConf dialect', () => {
  it.each([
    ['1e-4', 'float', 1e-4],
    ['1.0e4', 'float', 1e4],
    ['2e-2', 'float', 0.02],
    ['1_000', 'int', 1000],
    ['yes', 'bool', true],
    ['eps', 'str', 'eps'],
  ] as [string, string, unknown][])('%s -> %s', (text, kind, value) => {
    const t = plainOf(omegaconfDialect, text);
    expect(t.kind).toBe(kind);
    expect(t.value).toEqual(value);
  });
});

describe("Python's json dialect", () => {
  it('reads NaN, Infinity and -Infinity as floats', () => {
    expect(plainOf(pythonJsonDialect, 'NaN').value).toBeNaN();
    expect(plainOf(pythonJsonDialect, 'Infinity').value).toBe(Infinity);
    expect(plainOf(pythonJsonDialect, '-Infinity').value).toBe(-Infinity);
    expect(plainOf(pythonJsonDialect, '1000').kind).toBe('int');
    expect(plainOf(pythonJsonDialect, '1e-4').kind).toBe('float');
  });

  it('the JSON reader keeps a -Infinity value and the keys after it (real saved configs carry it)', () => {
    const text = '{"lambda_min_clipped": -Infinity, "num_train_timesteps": 1000}';
    const parsed = parseText(text, 'json');
    const root = parsed.documents[0]!.root!;
    expect(root.kind).toBe('map');
    if (root.kind !== 'map') return;
    const [clip, steps] = root.entries;
    expect(clip!.value).toMatchObject({ kind: 'scalar', value: -Infinity, raw: '-Infinity' });
    expect(text.slice(clip!.value!.span.start, clip!.value!.span.end)).toBe('-Infinity');
    expect(steps!.value).toMatchObject({ value: 1000 });
    expect(parsed.problems.filter((p) => p.severity === 'error')).toEqual([]);
    expect(parsed.problems.map((p) => p.code)).toEqual(['json-non-finite']);
  });
});

describe('generic dialect (YAML 1.2 core schema)', () => {
  it.each([
    ['1e-4', 'float', 1e-4],
    ['1_000', 'str', '1_000'],
    ['yes', 'str', 'yes'],
    ['010', 'int', 10],
  ] as [string, string, unknown][])('%s -> %s', (text, kind, value) => {
    const t = plainOf(genericDialect, text);
    expect(t.kind).toBe(kind);
    expect(t.value).toEqual(value);
  });
});
