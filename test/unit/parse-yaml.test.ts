/**
 * parse/ on YAML: located tree, spans, multi-document files, problems as data and the bounds that
 * keep hostile input cheap (nesting, list length, alias expansion, file size).
 */
import { describe, expect, it } from 'vitest';
import { parseText, LineIndex } from '../../server/src/parse';
import type { LocatedEntry, LocatedMap, LocatedNode, LocatedScalar, ParsedFile } from '../../server/src/parse';

function rootMap(file: ParsedFile, doc = 0): LocatedMap {
  const root = file.documents[doc]?.root;
  if (!root || root.kind !== 'map') throw new Error(`document ${doc} has no root map`);
  return root;
}

function get(map: LocatedMap, ...path: string[]): LocatedNode {
  let node: LocatedNode = map;
  for (const key of path) {
    if (node.kind !== 'map') throw new Error(`${key}: not a map`);
    const entry: LocatedEntry | undefined = node.entries.find((e) => e.key === key);
    if (!entry || !entry.value) throw new Error(`missing ${key}`);
    node = entry.value;
  }
  return node;
}

function scalar(node: LocatedNode): LocatedScalar {
  if (node.kind !== 'scalar') throw new Error('not a scalar');
  return node;
}

/** Deepest collection nesting of a located tree, walked without recursion. */
function maxDepth(root: LocatedNode | null): number {
  if (!root) return 0;
  let max = 0;
  const stack: [LocatedNode, number][] = [[root, root.kind === 'scalar' ? 0 : 1]];
  while (stack.length) {
    const [n, d] = stack.pop()!;
    max = Math.max(max, d);
    const kids = n.kind === 'map' ? n.entries.flatMap((e) => (e.value ? [e.value] : [])) : n.kind === 'list' ? n.items : [];
    for (const k of kids) stack.push([k, k.kind === 'scalar' ? d : d + 1]);
  }
  return max;
}

const NIGHT_STORYBOARD = `# runs/night-storyboard-ft.yaml: Lanternfish Pictures, night-time storyboard frames
run_name: night-storyboard-ft
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear   # latent model
  beta_start: 0.00085
  beta_end: 1.2e-2
  prediction_type: 'epsilon'
  trained_betas:
  clip_sample: false
training:
  resolution: 768
  noise_offset: "0.05"
  buckets: [512, 640, 768]
notes: |
  Very dark frames.
  Keep the moon visible.
`;

describe('YAML located tree', () => {
  const file = parseText(NIGHT_STORYBOARD, 'yaml');

  it('reads nested sections with YAML 1.2 core values', () => {
    expect(file.problems).toEqual([]);
    const map = rootMap(file);
    expect(scalar(get(map, 'noise_scheduler', 'num_train_timesteps')).value).toBe(1000);
    expect(scalar(get(map, 'noise_scheduler', 'beta_start')).value).toBe(0.00085);
    expect(scalar(get(map, 'noise_scheduler', 'beta_end')).value).toBe(0.012);
    expect(scalar(get(map, 'noise_scheduler', 'clip_sample')).value).toBe(false);
    // quoted numbers stay strings in the tree (setup decides how to read them)
    expect(scalar(get(map, 'training', 'noise_offset')).value).toBe('0.05');
    const buckets = get(map, 'training', 'buckets');
    expect(buckets.kind).toBe('list');
    if (buckets.kind === 'list') {
      expect(buckets.style).toBe('flow');
      expect(buckets.items.map((i) => scalar(i).value)).toEqual([512, 640, 768]);
    }
  });

  it('gives every key and value a span that slices to its source text', () => {
    const map = rootMap(file);
    const section = get(map, 'noise_scheduler') as LocatedMap;
    for (const entry of section.entries) {
      expect(NIGHT_STORYBOARD.slice(entry.keySpan.start, entry.keySpan.end)).toBe(entry.key);
      if (entry.value?.kind === 'scalar') {
        expect(NIGHT_STORYBOARD.slice(entry.value.span.start, entry.value.span.end)).toBe(entry.value.raw);
      }
    }
    const target = section.entries.find((e) => e.key === 'prediction_type')!;
    expect(scalar(target.value!).raw).toBe("'epsilon'");
    expect(scalar(target.value!).style).toBe('single');
    // entry span: key through value, without the trailing comment
    const schedule = section.entries.find((e) => e.key === 'beta_schedule')!;
    expect(NIGHT_STORYBOARD.slice(schedule.span.start, schedule.span.end)).toBe('beta_schedule: scaled_linear');
  });

  it('reads `key:` with no value as a null value whose entry ends at the colon', () => {
    const section = get(rootMap(file), 'noise_scheduler') as LocatedMap;
    const betas = section.entries.find((e) => e.key === 'trained_betas')!;
    expect(betas.value).toBeNull();
    expect(NIGHT_STORYBOARD.slice(betas.span.start, betas.span.end)).toBe('trained_betas:');
  });

  it('keeps block scalars with their style and a span without the trailing line break', () => {
    const notes = scalar(get(rootMap(file), 'notes'));
    expect(notes.style).toBe('block');
    expect(notes.value).toBe('Very dark frames.\nKeep the moon visible.\n');
    expect(notes.raw.startsWith('|')).toBe(true);
    expect(notes.raw.endsWith('visible.')).toBe(true);
  });

  it('records block and flow styles of collections', () => {
    const map = rootMap(file);
    expect(map.style).toBe('block');
    const inline = parseText('a: {b: 1, c: [2, 3]}\n', 'yaml');
    const a = get(rootMap(inline), 'a');
    expect(a.kind === 'map' && a.style).toBe('flow');
  });
});

describe('multi-document YAML', () => {
  const text = [
    '# sampling/product-stills.yaml',
    'num_train_timesteps: 1000',
    '---',
    'num_inference_steps: 25',
    'guidance_scale: 7.5',
    '---',
    '',
  ].join('\n');
  const file = parseText(text, 'yaml');

  it('returns one document per YAML document, in order', () => {
    expect(file.documents.length).toBe(3);
    expect(file.documents.map((d) => d.index)).toEqual([0, 1, 2]);
    expect(scalar(get(rootMap(file, 0), 'num_train_timesteps')).value).toBe(1000);
    expect(scalar(get(rootMap(file, 1), 'guidance_scale')).value).toBe(7.5);
    expect(file.documents[2]!.root).toBeNull();
  });

  it('gives documents disjoint spans in source order', () => {
    const [a, b] = [file.documents[0]!, file.documents[1]!];
    expect(a.span.end).toBeLessThanOrEqual(b.span.start);
    expect(text.slice(b.span.start, b.span.end)).toContain('num_inference_steps: 25');
    expect(text.slice(a.span.start, a.span.end)).not.toContain('num_inference_steps');
  });
});

describe('BOM and CRLF', () => {
  const text = '\uFEFFnoise_scheduler:\r\n  beta_schedule: linear\r\n  num_train_timesteps: 1000\r\n';
  const file = parseText(text, 'yaml');

  it('detects the BOM and the line ending', () => {
    expect(file.bom).toBe(true);
    expect(file.lineEnding).toBe('\r\n');
    expect(parseText('a: 1\nb: 2\r\n', 'yaml').lineEnding).toBe('\n');
    expect(parseText('a: 1', 'yaml').bom).toBe(false);
  });

  it('counts the BOM in every offset', () => {
    const section = get(rootMap(file), 'noise_scheduler') as LocatedMap;
    expect(rootMap(file).entries[0]!.keySpan.start).toBe(1);
    for (const entry of section.entries) {
      expect(text.slice(entry.keySpan.start, entry.keySpan.end)).toBe(entry.key);
      const v = scalar(entry.value!);
      expect(text.slice(v.span.start, v.span.end)).toBe(v.raw);
    }
    const steps = section.entries[1]!;
    const lines = new LineIndex(text);
    expect(lines.positionAt(steps.keySpan.start)).toEqual({ line: 2, character: 2 });
  });
});

describe('problems are data', () => {
  it('reports a syntax error without throwing and keeps what it could read', () => {
    const file = parseText('num_train_timesteps: 1000\nbetas: [0.1, 0.2\nbeta_schedule: linear\n', 'yaml');
    const errors = file.problems.filter((p) => p.severity === 'error');
    expect(errors.length).toBeGreaterThan(0);
    expect(errors.every((p) => p.code === 'yaml-syntax')).toBe(true);
    expect(errors.every((p) => !p.message.includes('\n'))).toBe(true);
    expect(file.documents.length).toBe(1);
  });

  it('reports bad indentation and tabs as problems', () => {
    const file = parseText('a:\n\t- b\n  c: d\n   - e', 'yaml');
    expect(file.problems.some((p) => p.severity === 'error')).toBe(true);
  });

  it('keeps the last of duplicate keys and reports the ignored one', () => {
    const text = 'guidance_scale: 5\nguidance_scale: 7.5\n';
    const file = parseText(text, 'yaml');
    const map = rootMap(file);
    expect(map.entries.length).toBe(1);
    expect(scalar(map.entries[0]!.value!).value).toBe(7.5);
    const dup = file.problems.find((p) => p.code === 'duplicate-key')!;
    expect(dup.severity).toBe('warning');
    expect(dup.span.start).toBe(0); // the first (ignored) key
  });

  it('never applies custom tags: reads plain data and warns', () => {
    const text = 'sampler: !!python/object:lanternfish.Sampler {name: ddim}\nsteps: !!python/name:os.system 30\nraw: !local "x"\n';
    const file = parseText(text, 'yaml');
    const map = rootMap(file);
    const sampler = get(map, 'sampler');
    expect(sampler.kind).toBe('map');
    expect(scalar(get(map, 'steps')).value).toBe(30);
    expect(scalar(get(map, 'raw')).value).toBe('x');
    const tags = file.problems.filter((p) => p.code === 'custom-tag');
    expect(tags.length).toBe(3);
    expect(tags.every((p) => p.severity === 'warning')).toBe(true);
    expect(tags[0]!.message).toContain('python/object');
  });

  it('does not throw on non-string input or empty text', () => {
    expect(parseText('', 'yaml').documents.length).toBeLessThanOrEqual(1);
    const odd = parseText(undefined as unknown as string, 'yaml');
    expect(odd.problems.filter((p) => p.code === 'internal-error')).toEqual([]);
    expect(odd.text).toBe('');
  });
});

describe('aliases', () => {
  it('resolves an alias to the anchored node and remembers where the alias is written', () => {
    const text = 'base: &sched {beta_schedule: cosine}\nfinetune: *sched\n';
    const file = parseText(text, 'yaml');
    const map = rootMap(file);
    expect(map.entries[1]!.value).toBe(map.entries[0]!.value);
    const span = map.entries[1]!.aliasSpan!;
    expect(text.slice(span.start, span.end)).toBe('*sched');
    expect(text.slice(map.entries[1]!.span.start, map.entries[1]!.span.end)).toBe('finetune: *sched');
  });

  it('reports an alias without an anchor and one that contains itself', () => {
    const missing = parseText('a: *nowhere\n', 'yaml');
    expect(missing.problems.some((p) => p.code === 'yaml-syntax' && p.message.includes('nowhere'))).toBe(true);
    const cycle = parseText('a: &loop [1, *loop]\n', 'yaml');
    expect(cycle.problems.some((p) => p.code === 'alias-cycle')).toBe(true);
  });

  it('stops an alias bomb with a problem and a bounded tree', () => {
    // Each level repeats the previous one nine times: 9^12 nodes if fully expanded.
    const lines = ['l0: &l0 [x, x, x, x, x, x, x, x, x]'];
    for (let i = 1; i <= 12; i++)
      lines.push(
        `l${i}: &l${i} [${Array(9)
          .fill(`*l${i - 1}`)
          .join(', ')}]`,
      );
    const file = parseText(lines.join('\n'), 'yaml');
    expect(file.problems.some((p) => p.code === 'alias-limit')).toBe(true);
    // Walk the tree as a consumer would (shared nodes visited each time) with a cap.
    let visited = 0;
    const stack: LocatedNode[] = [file.documents[0]!.root!];
    while (stack.length && visited < 10_000_000) {
      const n = stack.pop()!;
      visited++;
      if (n.kind === 'map') for (const e of n.entries) if (e.value) stack.push(e.value);
      if (n.kind === 'list') stack.push(...n.items);
    }
    expect(stack.length).toBe(0); // finished below the cap
    expect(visited).toBeLessThan(2_000_000);
  });

  it('honours maxAliasCount', () => {
    const text = 'a: &a 1\nb: *a\nc: *a\nd: *a\n';
    expect(parseText(text, 'yaml').problems).toEqual([]);
    const limited = parseText(text, 'yaml', { maxAliasCount: 2 });
    expect(limited.problems.map((p) => p.code)).toEqual(['alias-limit']);
    expect(scalar(get(rootMap(limited), 'd')).value).toBeNull();
    expect(scalar(get(rootMap(limited), 'c')).value).toBe(1);
  });
});

describe('bounds', () => {
  it('cuts 5,000-deep flow nesting with a too-deep problem', () => {
    const text = `betas: ${'['.repeat(5000)}0.1${']'.repeat(5000)}\nnum_train_timesteps: 1000\n`;
    const file = parseText(text, 'yaml');
    expect(file.problems.some((p) => p.code === 'too-deep')).toBe(true);
    expect(maxDepth(file.documents[0]!.root)).toBeLessThanOrEqual(256);
    // the rest of the document is still read
    expect(scalar(get(rootMap(file), 'num_train_timesteps')).value).toBe(1000);
  });

  it('cuts 5,000-deep compact sequences and flow maps', () => {
    for (const text of ['- '.repeat(5000) + '1\n', `${'{a: '.repeat(5000)}1${'}'.repeat(5000)}\n`]) {
      const file = parseText(text, 'yaml');
      expect(file.problems.some((p) => p.code === 'too-deep')).toBe(true);
      expect(maxDepth(file.documents[0]?.root ?? null)).toBeLessThanOrEqual(256);
    }
  });

  it('cuts deep block maps at maxNesting and keeps the cut text in the placeholder', () => {
    const lines: string[] = [];
    for (let i = 0; i < 6; i++) lines.push(`${' '.repeat(2 * i)}level${i}:`);
    lines.push(`${' '.repeat(12)}leaf: 1`);
    lines.push('sibling: 2');
    const text = `${lines.join('\n')}\n`;
    const file = parseText(text, 'yaml', { maxNesting: 3 });
    const cut = file.problems.find((p) => p.code === 'too-deep')!;
    expect(cut).toBeDefined();
    expect(text.slice(cut.span.start, cut.span.end)).toMatch(/^level3:/);
    const placeholder = scalar(get(rootMap(file), 'level0', 'level1', 'level2'));
    expect(placeholder.value).toBeNull();
    expect(placeholder.raw).toBe(text.slice(cut.span.start, cut.span.end));
    expect(scalar(get(rootMap(file), 'sibling')).value).toBe(2);
    expect(maxDepth(file.documents[0]!.root)).toBe(3);
  });

  it('handles 600-level block nesting (indentation) without the composer failing', () => {
    const lines = Array.from({ length: 600 }, (_, i) => `${' '.repeat(i)}k${i}:`);
    const file = parseText(lines.join('\n'), 'yaml');
    expect(file.problems.map((p) => p.code)).toEqual(['too-deep']);
    expect(maxDepth(file.documents[0]!.root)).toBe(256);
  });

  it('reads a 100,000-number beta list within the default limits', () => {
    const betas = Array.from({ length: 100_000 }, (_, i) => (1e-4 + (i * 0.02) / 99_999).toPrecision(6));
    const file = parseText(`trained_betas: [${betas.join(', ')}]\n`, 'yaml');
    expect(file.problems).toEqual([]);
    const list = get(rootMap(file), 'trained_betas');
    expect(list.kind === 'list' && list.items.length).toBe(100_000);
  });

  it('truncates lists longer than maxListLength with a problem', () => {
    const file = parseText('betas: [1, 2, 3, 4, 5, 6]\n', 'yaml', { maxListLength: 4 });
    const list = get(rootMap(file), 'betas');
    expect(list.kind === 'list' && list.items.map((i) => scalar(i).value)).toEqual([1, 2, 3, 4]);
    const p = file.problems.find((q) => q.code === 'too-long')!;
    expect(p.message).toContain('6');
  });

  it('refuses files above maxFileBytes with one problem and no tree', () => {
    const text = `notes: "${'é'.repeat(60)}"\n`; // 120 UTF-8 bytes of accents
    const file = parseText(text, 'yaml', { maxFileBytes: 100 });
    expect(file.documents).toEqual([]);
    expect(file.problems.map((p) => p.code)).toEqual(['too-large']);
    expect(parseText(text, 'yaml', { maxFileBytes: 200 }).documents.length).toBe(1);
  });
});
