/**
 * The TOML dialect (Python's tomllib, TOML 1.0.0): bare value tokens typed as the TOML 1.0.0
 * specification says, checked against the real tomllib where python3 (3.11+) is installed, and
 * against the located tree the TOML reader builds.
 */
import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { tomllibDialect, typeTomlPlain } from '../../server/src/consumers/dialects';
import { decideConsumer } from '../../server/src/consumers/decide';
import { readFile } from '../../server/src/engine/api';

/** Valid TOML 1.0 value tokens and what they are (TOML 1.0.0 specification, sections Integer, Float, Boolean). */
const VALID: [string, string, number | boolean | string][] = [
  ['1000', 'int', 1000],
  ['1_000', 'int', 1000],
  ['+7', 'int', 7],
  ['-0', 'int', 0],
  ['0x1F', 'int', 31],
  ['0o17', 'int', 15],
  ['0b101', 'int', 5],
  ['1e-4', 'float', 1e-4],
  ['1E4', 'float', 1e4],
  ['0.00085', 'float', 0.00085],
  ['1.5e+3', 'float', 1500],
  ['6.626_070e-34', 'float', 6.62607e-34],
  ['inf', 'float', 'inf'],
  ['-inf', 'float', '-inf'],
  ['true', 'bool', true],
  ['false', 'bool', false],
];

/** Not TOML values at all: a TOML loader stops with an error, and the dialect does not type them as numbers or booleans. */
const INVALID = ['007', '1.', '.5', 'True', 'yes', '1__0', '0x', '1e', '+0x1'];

function shown(v: unknown): unknown {
  return v === Infinity ? 'inf' : v === -Infinity ? '-inf' : v;
}

describe('tomllib dialect', () => {
  it.each(VALID)('%s is %s', (text, kind, value) => {
    const t = typeTomlPlain(text);
    expect(t.kind).toBe(kind);
    if (typeof value === 'number') expect(t.value as number).toBeCloseTo(value, 40);
    else expect(shown(t.value)).toBe(value);
  });

  it('nan is a float', () => {
    expect(typeTomlPlain('nan').value).toBeNaN();
    expect(typeTomlPlain('-nan').kind).toBe('float');
  });

  it.each(INVALID)('%s is not typed as a value', (text) => {
    expect(typeTomlPlain(text).kind).toBe('str');
  });

  it('quoted strings stay strings whatever they look like', () => {
    expect(tomllibDialect.typeScalar({ source: '"1e-4"', style: 'double' })).toEqual({ value: '1e-4', kind: 'str' });
    expect(tomllibDialect.typeScalar({ source: "'true'", style: 'single' })).toEqual({ value: 'true', kind: 'str' });
  });

  it('gives the value the TOML reader put in the located tree', () => {
    const text = VALID.map(([t], i) => `k${i} = ${t}`).join('\n') + '\n';
    const read = readFile(text, { path: '/studio/args.toml' });
    const root = read.parsed.documents[0]!.root;
    if (!root || root.kind !== 'map') throw new Error('no map');
    root.entries.forEach((e, i) => {
      if (e.value?.kind !== 'scalar') throw new Error('not a scalar');
      expect(shown(typeTomlPlain(VALID[i]![0]).value)).toEqual(shown(e.value.value));
    });
  });

  it('is the loader of every TOML document, shown in the decision', () => {
    const read = readFile('[training_arguments]\nlearning_rate = 1e-4\n', { path: '/studio/other.toml' });
    const d = decideConsumer(read.parsed.documents[0]!, 'toml', '/studio/other.toml').decision;
    expect([d.family, d.dialect, d.dialectBasis]).toEqual(['generic', 'tomllib', 'extension']);
  });

  let python = false;
  try {
    execFileSync('python3', ['-c', 'import tomllib'], { stdio: 'ignore' });
    python = true;
  } catch {
    python = false;
  }

  it.skipIf(!python)('agrees with the real tomllib, and tomllib refuses the invalid tokens', () => {
    const script =
      'import sys, json, math, tomllib\n' +
      'out = []\n' +
      'for line in sys.stdin.read().split("\\n"):\n' +
      '    try:\n' +
      '        v = tomllib.loads("k = " + line)["k"]\n' +
      '    except tomllib.TOMLDecodeError:\n' +
      '        out.append(["error", None]); continue\n' +
      '    kind = {bool: "bool", int: "int", float: "float", str: "str"}[type(v)]\n' +
      '    out.append([kind, ("inf" if v > 0 else "-inf") if isinstance(v, float) and math.isinf(v) else v])\n' +
      'print(json.dumps(out))\n';
    const tokens = [...VALID.map((r) => r[0]), ...INVALID];
    const got = JSON.parse(execFileSync('python3', ['-c', script], { input: tokens.join('\n') }).toString()) as [string, unknown][];
    const ours = tokens.map((text) => {
      const t = typeTomlPlain(text);
      return t.kind === 'str' ? ['error', null] : [t.kind, shown(t.value)];
    });
    expect(ours.length).toBe(got.length);
    ours.forEach((o, i) => {
      expect(o[0]).toBe(got[i]![0]);
      if (typeof o[1] === 'number') expect(o[1]).toBeCloseTo(got[i]![1] as number, 40);
      else expect(o[1]).toEqual(got[i]![1]);
    });
  });
});
