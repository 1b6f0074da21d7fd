/**
 * Schedule curves are shared between documents (shared-math's cache for discrete schedules, the
 * analysis' own memo for flow and Karras curves), so nothing downstream may write to them. These
 * tests run every consumer of the curves over the demo files and check the shared numbers are
 * unchanged, bit for bit.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { computeSchedule } from '@noiselint/shared-math';
import { formatExplainText } from '../../server/src/views/explainFormat';
import { analyzeText, type FileResult } from '../../server/src/engine/api';
import type { ScheduleCurve } from '../../server/src/analysis/analysis';
import { hoverAt } from '../../server/src/views/hover';
import { inlineHintsFor } from '../../server/src/views/inlayHints';
import { plotDataFor } from '../../server/src/views/plotData';
import { summaryFor } from '../../server/src/views/documentSummary';

const examples = join(__dirname, '..', '..', 'examples');
const DEMO_FILES = [
  'night-storyboards/train-finetune.yaml',
  'night-storyboards/sample-leading.yaml',
  'product-stills-fixed/training/finetune-v-zero-snr.yaml',
  'product-stills-fixed/serving/sampler-trailing.yaml',
  'pixel-cosine/thumbnail-model.json',
  'flow-matching/layout-flow.yaml',
  'karras-sigmas/edm-heun.jsonc',
  'karras-sigmas/zero-snr-euler-karras.jsonc',
  'broken/explicit-betas.yaml',
];

function analyse(rel: string): FileResult {
  const path = join(examples, rel);
  return analyzeText(readFileSync(path, 'utf8'), { path });
}

/** Every curve array of a file's analyses (current and rescaled). */
function curvesOf(file: FileResult): ScheduleCurve[] {
  return file.documents.flatMap((d) => [d.analysis.schedule?.curve, d.analysis.rescaled?.curve].filter((c): c is ScheduleCurve => !!c));
}

const copyOf = (c: ScheduleCurve) => ({ alphaBar: Array.from(c.alphaBar), logSnr: Array.from(c.logSnr), signal: Array.from(c.signal) });

describe('shared schedule curves', () => {
  it('two documents with the same schedule hold the same arrays (one copy between them)', () => {
    const a = analyse('night-storyboards/train-finetune.yaml');
    const b = analyse('night-storyboards/train-finetune.yaml');
    const ca = curvesOf(a);
    expect(ca.length).toBeGreaterThanOrEqual(2);
    curvesOf(b).forEach((c, i) => {
      expect(c.alphaBar).toBe(ca[i]!.alphaBar);
      expect(c.logSnr).toBe(ca[i]!.logSnr);
      expect(c.signal).toBe(ca[i]!.signal);
    });
    // The discrete curve is shared-math's cached schedule itself.
    const schedule = a.documents.find((d) => d.analysis.schedule?.family === 'discrete')!.analysis.schedule!;
    const cached = computeSchedule({ kind: 'scaled_linear', trainSteps: 1000, betaStart: 0.00085, betaEnd: 0.012 });
    if (!cached.ok) throw new Error(cached.problem);
    expect(schedule.curve.alphaBar).toBe(cached.value.alphaBar);
    expect(schedule.betas).toBe(cached.value.betas);
  });

  it('flow and Karras curves are shared too', () => {
    for (const rel of ['flow-matching/layout-flow.yaml', 'karras-sigmas/edm-heun.jsonc']) {
      const first = curvesOf(analyse(rel))[0]!;
      const again = curvesOf(analyse(rel))[0]!;
      expect(first).toBeDefined();
      expect(again.logSnr).toBe(first.logSnr);
    }
  });

  it('rules, hover, inlay hints, plot data, summary and explain leave the shared numbers as they were', () => {
    const files = DEMO_FILES.map(analyse);
    const curves = files.flatMap(curvesOf);
    expect(curves.length).toBeGreaterThanOrEqual(DEMO_FILES.length);
    const before = curves.map(copyOf);
    for (const [i, file] of files.entries()) {
      const text = file.parsed.text;
      // Hover every offset where a field could sit (start of each line and a few characters in).
      for (let offset = 0; offset < text.length; offset += 7) hoverAt(file, offset, i % 2 ? 'markdown' : 'plaintext');
      inlineHintsFor(file);
      plotDataFor(file, `file:///${i}`, 1);
      summaryFor(file, `file:///${i}`);
      formatExplainText(file);
    }
    // And once more through the whole pipeline, which reads the same cached arrays.
    DEMO_FILES.forEach(analyse);
    expect(curves.map(copyOf)).toEqual(before);
  });
});
