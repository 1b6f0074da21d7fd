/**
 * The pre-filter (engine/prefilter.ts) passes over a text only when it cannot hold a finding: no
 * fixture or example of the repository that has findings (or a diffusion document) is ever passed
 * over, and the texts it does pass over really produce nothing.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyzeText } from '../../server/src/engine/api';
import { builtinPrefilterNeedles, mayBeDiffusionConfig, normalizedText } from '../../server/src/engine/prefilter';
import { formatFromPath } from '../../server/src/parse';
import { loadProject } from '../../server/src/workspace/projectFile';
import { writeMonorepo } from '../load/corpus';
import { makeTree, removeTree } from '../workspace/helpers';

const repo = join(__dirname, '..', '..');

function configFilesUnder(dir: string, out: string[] = []): string[] {
  for (const name of readdirSync(dir)) {
    if (name === 'node_modules' || name === 'artifacts') continue;
    const p = join(dir, name);
    if (statSync(p).isDirectory()) configFilesUnder(p, out);
    else if (formatFromPath(p) && !name.endsWith('.expected.json')) out.push(p);
  }
  return out;
}

describe('pre-filter before any parse', () => {
  it('never passes over a fixture or example that has findings or a diffusion document', () => {
    const files = [...configFilesUnder(join(repo, 'test')), ...configFilesUnder(join(repo, 'examples'))];
    let withFindings = 0;
    let passedOver = 0;
    for (const path of files) {
      const text = readFileSync(path, 'utf8');
      let project;
      try {
        project = loadProject(path);
      } catch {
        project = undefined; // an invalid project file in a fixture folder: defaults apply
      }
      const result = analyzeText(text, { path, project });
      const may = mayBeDiffusionConfig(text, project?.aliases);
      if (result.findings.length > 0 || result.isDiffusionConfig) {
        withFindings++;
        expect(may, `${path} has findings but would be passed over`).toBe(true);
      }
      if (!may) passedOver++;
    }
    // The check is only worth something if there are many files with findings, and some without.
    expect(withFindings).toBeGreaterThan(100);
    expect(passedOver).toBeGreaterThan(0);
  });

  it('passes over most of a monorepo, and what it passes over has no findings', () => {
    const dir = makeTree({});
    const { files } = writeMonorepo(dir, 400);
    let passed = 0;
    for (const f of files) {
      const text = readFileSync(f.path, 'utf8');
      if (mayBeDiffusionConfig(text)) continue;
      passed++;
      const result = analyzeText(text, { path: f.path });
      expect(result.findings, f.path).toEqual([]);
      expect(result.isDiffusionConfig).toBe(false);
    }
    removeTree(dir);
    expect(passed).toBeGreaterThan(files.length / 2);
  });

  it('compares spellings the way keys are compared', () => {
    expect(mayBeDiffusionConfig('{ "name": "not-a-config", "version": "1.0.0" }')).toBe(false);
    expect(mayBeDiffusionConfig('jobs:\n  test:\n    steps:\n      - run: npm test\n')).toBe(false);
    expect(mayBeDiffusionConfig('numTrainTimesteps: 1000\n')).toBe(true);
    expect(mayBeDiffusionConfig('Beta-Schedule: cosine\n')).toBe(true);
    // A dotted alias needs all of its segments (`sampler.steps`).
    expect(mayBeDiffusionConfig('sampler:\n  steps: 30\n')).toBe(true);
    // An escape can spell a key the raw text does not show.
    expect(mayBeDiffusionConfig('"beta\\u005fschedule": "linear"\n')).toBe(true);
    // The project's own aliases count too.
    expect(mayBeDiffusionConfig('lanternfish_noise_curve: cosine\n')).toBe(false);
    expect(mayBeDiffusionConfig('lanternfish_noise_curve: cosine\n', { betaSchedule: ['lanternfish_noise_curve'] })).toBe(true);
  });
});

describe('pre-filter search', () => {
  // The plain search the trigram screen stands in front of: every segment of some needle appears
  // in the normalised text. The screen may only save work, never change the answer.
  const needles = builtinPrefilterNeedles();
  const plain = (text: string) => text.includes('\\') || needles.some((segs) => segs.every((seg) => normalizedText(text).includes(seg)));

  it('gives the plain search answer on texts built from pieces of the needles', () => {
    const pieces = needles.flat();
    let seed = 12345;
    const next = () => (seed = (seed * 1103515245 + 12345) % 2 ** 31) / 2 ** 31;
    let found = 0;
    for (let k = 0; k < 3000; k++) {
      const parts: string[] = [];
      for (let j = 0; j < 1 + Math.floor(next() * 4); j++) {
        const piece = pieces[Math.floor(next() * pieces.length)]!;
        // A needle whole, cut short, or with one letter changed: near misses share most trigrams.
        const cut = next();
        const at = Math.floor(next() * piece.length);
        const word = cut < 0.3 ? piece : cut < 0.6 ? piece.slice(0, at) : piece.slice(0, at) + 'q' + piece.slice(at + 1);
        parts.push(`${word}_${Math.floor(next() * 100)}: x`);
      }
      const text = parts.join('\n');
      const expected = plain(text);
      if (expected) found++;
      expect(mayBeDiffusionConfig(text)).toBe(expected);
    }
    // Both answers occur, so the comparison means something.
    expect(found).toBeGreaterThan(100);
    expect(found).toBeLessThan(2900);
  });

  it('gives the plain search answer on every file of a monorepo tree', () => {
    const dir = makeTree({});
    try {
      const { files } = writeMonorepo(dir, 300);
      for (const f of files) {
        const text = readFileSync(f.path, 'utf8');
        expect(mayBeDiffusionConfig(text)).toBe(plain(text));
      }
    } finally {
      removeTree(dir);
    }
  });
});
