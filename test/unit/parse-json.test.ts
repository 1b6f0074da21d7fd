/** parse/ on JSON and JSONC: tree, spans, strict-JSON warnings, problems as data, bounds. */
import { describe, expect, it } from 'vitest';
import { formatFromPath, parseText } from '../../server/src/parse';
import type { LocatedMap, LocatedNode, ParsedFile } from '../../server/src/parse';

function rootMap(file: ParsedFile): LocatedMap {
  const root = file.documents[0]?.root;
  if (!root || root.kind !== 'map') throw new Error('no root map');
  return root;
}

function value(map: LocatedMap, key: string): LocatedNode {
  const e = map.entries.find((x) => x.key === key);
  if (!e?.value) throw new Error(`missing ${key}`);
  return e.value;
}

const PRODUCT_STILLS = `{
  "_class_name": "DDIMScheduler",
  "num_train_timesteps": 1000,
  "beta_schedule": "scaled_linear",
  "beta_start": 0.00085,
  "beta_end": 0.012,
  "rescale_betas_zero_snr": true,
  "trained_betas": null,
  "timestep_spacing": "trailing"
}
`;

describe('formatFromPath', () => {
  it('maps extensions, case-insensitively, and ignores URI queries', () => {
    expect(formatFromPath('runs/night-storyboard-ft.yaml')).toBe('yaml');
    expect(formatFromPath('runs/night-storyboard-ft.YML')).toBe('yaml');
    expect(formatFromPath('file:///lanternfish/sampling/product-stills.json')).toBe('json');
    expect(formatFromPath('.noiselint/settings.jsonc')).toBe('jsonc');
    expect(formatFromPath('file:///x/a.json?version=3')).toBe('json');
    expect(formatFromPath('README.md')).toBeNull();
    expect(formatFromPath('Makefile')).toBeNull();
  });
});

describe('JSON located tree', () => {
  const file = parseText(PRODUCT_STILLS, 'json');

  it('reads values with their JSON types', () => {
    expect(file.problems).toEqual([]);
    expect(file.documents.length).toBe(1);
    const map = rootMap(file);
    expect(map.style).toBe('flow');
    const steps = value(map, 'num_train_timesteps');
    expect(steps.kind === 'scalar' && steps.value).toBe(1000);
    const zero = value(map, 'rescale_betas_zero_snr');
    expect(zero.kind === 'scalar' && zero.value).toBe(true);
    const betas = value(map, 'trained_betas');
    expect(betas.kind === 'scalar' && betas.value).toBeNull();
  });

  it('gives spans that slice to the source (keys include their quotes)', () => {
    const map = rootMap(file);
    for (const e of map.entries) {
      expect(PRODUCT_STILLS.slice(e.keySpan.start, e.keySpan.end)).toBe(`"${e.key}"`);
      const v = e.value!;
      if (v.kind === 'scalar') expect(PRODUCT_STILLS.slice(v.span.start, v.span.end)).toBe(v.raw);
      expect(PRODUCT_STILLS.slice(e.span.start, e.span.end)).toMatch(new RegExp(`^"${e.key}":\\s*`));
    }
    const spacing = value(map, 'timestep_spacing');
    expect(spacing.kind === 'scalar' && spacing.raw).toBe('"trailing"');
    expect(spacing.kind === 'scalar' && spacing.style).toBe('double');
  });

  it('counts a BOM in offsets', () => {
    const text = '\uFEFF{"guidance_scale": 7.5}';
    const f = parseText(text, 'json');
    expect(f.bom).toBe(true);
    expect(f.problems).toEqual([]);
    const e = rootMap(f).entries[0]!;
    expect(text.slice(e.keySpan.start, e.keySpan.end)).toBe('"guidance_scale"');
  });

  it('keeps the last duplicate key and reports the first', () => {
    const f = parseText('{"guidance_scale": 5, "guidance_scale": 9}', 'json');
    const map = rootMap(f);
    expect(map.entries.length).toBe(1);
    const v = map.entries[0]!.value!;
    expect(v.kind === 'scalar' && v.value).toBe(9);
    expect(f.problems.map((p) => p.code)).toEqual(['duplicate-key']);
  });

  it('reads overflowing numbers as Infinity (setup reports them)', () => {
    const f = parseText('{"beta_end": 1e400}', 'json');
    const v = rootMap(f).entries[0]!.value!;
    expect(v.kind === 'scalar' && v.value).toBe(Infinity);
  });
});

describe('comments and trailing commas', () => {
  const text = '{\n  // storyboard run\n  "num_inference_steps": 30, /* few */\n  "guidance_scale": 7.5,\n}\n';

  it('warns about them in .json files but still reads the tree', () => {
    const f = parseText(text, 'json');
    const codes = f.problems.map((p) => p.code);
    expect(codes.filter((c) => c === 'json-comment').length).toBe(2);
    expect(codes).toContain('json-trailing-comma');
    expect(f.problems.every((p) => p.severity === 'warning')).toBe(true);
    expect(rootMap(f).entries.map((e) => e.key)).toEqual(['num_inference_steps', 'guidance_scale']);
  });

  it('accepts them silently in .jsonc files', () => {
    const f = parseText(text, 'jsonc');
    expect(f.problems).toEqual([]);
    expect(rootMap(f).entries.length).toBe(2);
  });
});

describe('JSON problems are data', () => {
  it('reports syntax errors as problems with spans', () => {
    const text = '{"num_train_timesteps": 1000 "beta_schedule": }';
    const f = parseText(text, 'json');
    const errs = f.problems.filter((p) => p.code === 'json-syntax');
    expect(errs.length).toBeGreaterThan(0);
    expect(errs.every((p) => p.severity === 'error' && p.span.start >= 0 && p.span.end <= text.length)).toBe(true);
    expect(f.documents.length).toBe(1);
  });

  it('reports an empty file', () => {
    const f = parseText('', 'json');
    expect(f.documents[0]!.root).toBeNull();
    expect(f.problems.some((p) => p.code === 'json-syntax')).toBe(true);
  });

  it('cuts 5,000- and 50,000-deep nesting with a problem', () => {
    for (const n of [5000, 50_000]) {
      const text = `{"betas": ${'['.repeat(n)}${']'.repeat(n)}, "rho": 7}`;
      const f = parseText(text, 'json');
      expect(f.problems.map((p) => p.code)).toEqual(['too-deep']);
      const rho = value(rootMap(f), 'rho');
      expect(rho.kind === 'scalar' && rho.value).toBe(7);
    }
  });

  it('cuts unbalanced deep nesting too', () => {
    const f = parseText('['.repeat(20_000), 'json');
    expect(f.problems.some((p) => p.code === 'too-deep')).toBe(true);
  });

  it('truncates long arrays', () => {
    const f = parseText('{"betas": [1, 2, 3, 4, 5]}', 'jsonc', { maxListLength: 2 });
    const betas = value(rootMap(f), 'betas');
    expect(betas.kind === 'list' && betas.items.length).toBe(2);
    expect(f.problems.map((p) => p.code)).toEqual(['too-long']);
  });
});
