/**
 * parse/ on TOML: the located tree (tables, dotted keys, arrays of tables, inline tables), spans
 * that slice to the source, TOML types, comments, problems as data, bounds. TOML facts are from
 * the TOML v1.0.0 specification (Preston-Werner and Gedda 2021).
 */
import { describe, expect, it } from 'vitest';
import { formatFromPath, parseText } from '../../server/src/parse';
import type { LocatedEntry, LocatedMap, LocatedNode, ParsedFile } from '../../server/src/parse';

function rootMap(file: ParsedFile): LocatedMap {
  const root = file.documents[0]?.root;
  if (!root || root.kind !== 'map') throw new Error('no root map');
  return root;
}

function entry(map: LocatedNode | null, key: string): LocatedEntry {
  if (!map || map.kind !== 'map') throw new Error(`not a map looking for ${key}`);
  const e = map.entries.find((x) => x.key === key);
  if (!e) throw new Error(`missing ${key}`);
  return e;
}

const at = (path: string[], file: ParsedFile): LocatedEntry => {
  let node: LocatedNode | null = rootMap(file);
  let e: LocatedEntry | null = null;
  for (const k of path) {
    e = entry(node, k);
    node = e.value;
  }
  return e!;
};

const NIGHT_ARGS = `# Lanternfish Pictures: night storyboard fine-tune, arguments
run_name = "lf-night-ft-012"
output.dir = 'runs/night/012'   # dotted key

[noise_scheduler]
num_train_timesteps = 1000
beta_schedule = "scaled_linear"
beta_start = 0.00085
beta_end = 1.2e-2
rescale_betas_zero_snr = false
"prediction type" = 'epsilon'

[training.optim]
learning_rate = 1e-6
betas = [0.9, 0.999]

[[sampling.previews]]
name = """dusk
alley"""
steps = { count = 30, spacing = "leading" }

[[sampling.previews]]
name = "harbour"
started = 2026-11-30T21:00:00Z
`;

describe('formatFromPath', () => {
  it('maps .toml, case-insensitively', () => {
    expect(formatFromPath('runs/night-args.toml')).toBe('toml');
    expect(formatFromPath('file:///lanternfish/NIGHT.TOML?x=1')).toBe('toml');
    expect(formatFromPath('runs/night.tom')).toBeNull();
  });
});

describe('TOML located tree', () => {
  const file = parseText(NIGHT_ARGS, 'toml');

  it('parses cleanly into one document with a block root map', () => {
    expect(file.format).toBe('toml');
    expect(file.problems).toEqual([]);
    expect(file.documents.length).toBe(1);
    const root = rootMap(file);
    expect(root.style).toBe('block');
    expect(root.entries.map((e) => e.key)).toEqual(['run_name', 'output', 'noise_scheduler', 'training', 'sampling']);
  });

  it('reads values with their TOML types', () => {
    const v = (path: string[]) => {
      const n = at(path, file).value;
      return n?.kind === 'scalar' ? n.value : n?.kind;
    };
    expect(v(['noise_scheduler', 'num_train_timesteps'])).toBe(1000);
    expect(v(['noise_scheduler', 'beta_schedule'])).toBe('scaled_linear');
    expect(v(['noise_scheduler', 'beta_start'])).toBe(0.00085);
    expect(v(['noise_scheduler', 'beta_end'])).toBe(0.012);
    expect(v(['noise_scheduler', 'rescale_betas_zero_snr'])).toBe(false);
    expect(v(['noise_scheduler', 'prediction type'])).toBe('epsilon');
    expect(v(['training', 'optim', 'learning_rate'])).toBe(1e-6);
    expect(v(['output', 'dir'])).toBe('runs/night/012');
  });

  it('gives spans that slice to the source; keys include their quotes', () => {
    const slice = (s: { start: number; end: number }) => NIGHT_ARGS.slice(s.start, s.end);
    const schedule = at(['noise_scheduler', 'beta_schedule'], file);
    expect(slice(schedule.keySpan)).toBe('beta_schedule');
    expect(slice(schedule.value!.span)).toBe('"scaled_linear"');
    expect(slice(schedule.span)).toBe('beta_schedule = "scaled_linear"');
    expect(schedule.value?.kind === 'scalar' && schedule.value.style).toBe('double');
    const target = at(['noise_scheduler', 'prediction type'], file);
    expect(slice(target.keySpan)).toBe('"prediction type"');
    expect(target.value?.kind === 'scalar' && target.value.style).toBe('single');
    const end = at(['noise_scheduler', 'beta_end'], file).value!;
    expect(end.kind === 'scalar' && end.raw).toBe('1.2e-2');
  });

  it('opens nested maps for dotted keys and table headers, and records where the dotted key starts', () => {
    const dir = at(['output', 'dir'], file);
    expect(NIGHT_ARGS.slice(dir.tomlKey!.start, dir.span.end)).toBe("output.dir = 'runs/night/012'");
    expect(dir.tomlKey!.inline).toBe(false);
    const lr = at(['training', 'optim', 'learning_rate'], file);
    expect(NIGHT_ARGS.slice(lr.tomlKey!.start, lr.keySpan.end)).toBe('learning_rate');
    // A header-made table has no key/value line of its own.
    expect(at(['noise_scheduler'], file).tomlKey).toBeUndefined();
    const scheduler = at(['noise_scheduler'], file).value as LocatedMap;
    expect(scheduler.kind).toBe('map');
    expect(scheduler.style).toBe('block');
    expect(NIGHT_ARGS.slice(scheduler.span.start, scheduler.span.end)).toMatch(/^\[noise_scheduler\][\s\S]*'epsilon'$/);
  });

  it('reads an array of tables as a block list of maps, inline tables and arrays as flow', () => {
    const previews = at(['sampling', 'previews'], file).value!;
    expect(previews.kind).toBe('list');
    if (previews.kind !== 'list') return;
    expect(previews.style).toBe('block');
    expect(previews.items.length).toBe(2);
    const first = previews.items[0] as LocatedMap;
    const name = entry(first, 'name').value!;
    expect(name.kind === 'scalar' && name.value).toBe('dusk\nalley');
    expect(name.kind === 'scalar' && name.style).toBe('block');
    const steps = entry(first, 'steps').value as LocatedMap;
    expect(steps.style).toBe('flow');
    expect(entry(steps, 'count').tomlKey?.inline).toBe(true);
    const second = previews.items[1] as LocatedMap;
    const started = entry(second, 'started').value!;
    // Dates have no concept: their text.
    expect(started.kind === 'scalar' && started.value).toBe('2026-11-30T21:00:00Z');
    const betas = at(['training', 'optim', 'betas'], file).value!;
    expect(betas.kind === 'list' && betas.style).toBe('flow');
  });

  it('keeps every comment span, marker included', () => {
    const texts = (file.comments ?? []).map((c) => NIGHT_ARGS.slice(c.start, c.end));
    expect(texts).toEqual(['# Lanternfish Pictures: night storyboard fine-tune, arguments', '# dotted key']);
  });

  it('extends a table made implicitly by a deeper header when its own header comes later', () => {
    const text = '[a.b]\nx = 1\n[a]\ny = 2\n';
    const f = parseText(text, 'toml');
    expect(f.problems).toEqual([]);
    expect(at(['a', 'b', 'x'], f).value?.kind).toBe('scalar');
    expect(at(['a', 'y'], f).value?.kind).toBe('scalar');
    expect(text.slice(at(['a'], f).keySpan.start, at(['a'], f).keySpan.end)).toBe('a');
  });
});

describe('TOML problems as data', () => {
  it('gives a syntax error at its offset, no tree, and keeps the comments', () => {
    const text = '# half-edited\n[noise_scheduler]\nbeta_schedule = [scaled_linear\n';
    const f = parseText(text, 'toml');
    expect(f.documents.length).toBe(1);
    expect(f.documents[0]!.root).toBeNull();
    expect(f.problems.length).toBe(1);
    expect(f.problems[0]!.code).toBe('toml-syntax');
    expect(f.problems[0]!.severity).toBe('error');
    expect(f.problems[0]!.span.start).toBeGreaterThanOrEqual(text.indexOf('[scaled'));
    expect(f.comments).toEqual([{ start: 0, end: 13 }]);
  });

  it('refuses a key defined twice (TOML v1.0.0: "Defining a key multiple times is invalid")', () => {
    const f = parseText('beta_end = 0.012\nbeta_end = 0.02\n', 'toml');
    expect(f.problems.map((p) => p.code)).toEqual(['toml-syntax']);
    expect(f.problems[0]!.span.start).toBe(17);
  });

  it('reads a BOM file with offsets that count the BOM', () => {
    const text = '\ufeffbeta_schedule = "linear"\n';
    const f = parseText(text, 'toml');
    expect(f.bom).toBe(true);
    expect(f.problems).toEqual([]);
    const e = entry(rootMap(f), 'beta_schedule');
    expect(text.slice(e.value!.span.start, e.value!.span.end)).toBe('"linear"');
  });

  it('keeps CRLF line endings and offsets', () => {
    const text = 'a = 1\r\n[s]\r\nbeta_end = 0.012 # c\r\n';
    const f = parseText(text, 'toml');
    expect(f.lineEnding).toBe('\r\n');
    expect(f.problems).toEqual([]);
    const e = at(['s', 'beta_end'], f);
    expect(text.slice(e.value!.span.start, e.value!.span.end)).toBe('0.012');
    expect((f.comments ?? []).map((c) => text.slice(c.start, c.end))).toEqual(['# c']);
  });

  it('bounds nesting without recursion: 100,000 nested arrays become one placeholder', () => {
    const depth = 100_000;
    const text = `beta_schedule = "linear"\ndeep = ${'['.repeat(depth)}${']'.repeat(depth)}\n`;
    const f = parseText(text, 'toml', { maxNesting: 64 });
    expect(f.problems.map((p) => p.code)).toEqual(['too-deep']);
    const deep = entry(rootMap(f), 'deep').value!;
    expect(deep.kind).toBe('list');
    // Brackets inside strings and header brackets are not nesting.
    const g = parseText('[[runs]]\nname = "[[[[[[[[["\n', 'toml', { maxNesting: 2 });
    expect(g.problems).toEqual([]);
  });

  it('truncates long arrays at the list limit', () => {
    const text = `betas = [${Array.from({ length: 50 }, () => '0.01').join(', ')}]\n`;
    const f = parseText(text, 'toml', { maxListLength: 10 });
    expect(f.problems.map((p) => p.code)).toEqual(['too-long']);
    const betas = entry(rootMap(f), 'betas').value!;
    expect(betas.kind === 'list' && betas.items.length).toBe(10);
  });

  it('never throws on garbage', () => {
    for (const text of ['=', '[', '[[a]', 'a = """', "a = '''", 'a.b.c', '\u0000', '[a]\n[a]\n', 'x = {a = 1,}', '"\\']) {
      const f = parseText(text, 'toml');
      expect(f.problems.length).toBeGreaterThan(0);
      expect(f.problems.every((p) => p.span.start >= 0 && p.span.end <= text.length)).toBe(true);
    }
  });
});

describe('TOML suppression comments', () => {
  it('reads `# noiselint: deliberate` comments like YAML', () => {
    const text = '# noiselint: deliberate terminal-snr-leak because stock schedule on purpose\nbeta_schedule = "scaled_linear"\n';
    const f = parseText(text, 'toml');
    const at = text.indexOf('terminal-snr-leak');
    expect(f.suppressions).toEqual([
      {
        scope: 'next-line',
        line: 0,
        targetLine: 1,
        rules: ['terminal-snr-leak'],
        ids: [{ id: 'terminal-snr-leak', span: { start: at, end: at + 'terminal-snr-leak'.length } }],
        reason: 'stock schedule on purpose',
      },
    ]);
  });
});
