/**
 * The run rescale over training + sampling pairs in YAML, JSON and JSONC and several key
 * families: afterwards no finding of the fixed rules and no mismatch, a second run changes
 * nothing, comments survive, and the before/after numbers agree with shared-math.
 */
import { computeSchedule, samplingTimesteps, snrFromAlphaBar, ZERO_SNR_ALPHA_BAR_CLAMP } from '@noiselint/shared-math';
import { describe, expect, it } from 'vitest';
import { readFile } from '../../server/src/engine/api';
import { applyEdits } from '../../server/src/fix/apply';
import { planRunRescale, RUN_FIXED_RULES, type RunFileInput, type RunPlan } from '../../server/src/fix/runRescale';
import { parseText } from '../../server/src/parse';
import type { SourceFormat } from '../../server/src/parse/types';
import { analysePair, partnersOf, RUN_PAIRS, type RunPair } from './pairs';

function inputs(pair: Pick<RunPair, 'format' | 'ext'>, train: string, sample: string): RunFileInput[] {
  const trainPath = `train.${pair.ext}`;
  const partners = partnersOf({ ...pair, train }, train, trainPath);
  return [
    { path: trainPath, side: 'training', reading: readFile(train, { path: trainPath, format: pair.format }) },
    {
      path: `sample.${pair.ext}`,
      side: 'sampling',
      reading: readFile(sample, { path: `sample.${pair.ext}`, format: pair.format, partners, pairRole: 'sampling' }),
    },
  ];
}

function applied(plan: RunPlan, path: string, text: string): string {
  const file = plan.files.find((f) => f.path === path)!;
  expect(file.textEdits, `${path} renders`).not.toBeNull();
  return applyEdits(text, file.textEdits!);
}

function comments(text: string, format: SourceFormat): string[] {
  const parsed = parseText(text, format);
  return (parsed.comments ?? []).map((c) => text.slice(c.start, c.end).trim());
}

describe.each(RUN_PAIRS)('run rescale: $name', (pair) => {
  const plan = planRunRescale(inputs(pair, pair.train, pair.sample));
  const train = applied(plan, `train.${pair.ext}`, pair.train);
  const sample = applied(plan, `sample.${pair.ext}`, pair.sample);

  it('leaves no finding of the fixed rules and no mismatch in either file', () => {
    expect(plan.blocked).toEqual([]);
    expect(plan.changesTraining).toBe(true);
    const after = analysePair(pair, train, sample);
    const fixed = [...after.train.findings, ...after.sample.findings].filter((f) => RUN_FIXED_RULES.includes(f.rule));
    expect(fixed.map((f) => `${f.rule}: ${f.message}`)).toEqual([]);
    // The training file really is rescaled with a velocity target, and the sampler starts at T - 1.
    const t = after.train.documents[0]!;
    expect(t.analysis.schedule?.rescaleApplied).toBe(true);
    expect(t.setup.fields.predictionTarget?.value).toBe('v');
    expect(t.setup.fields.offsetNoise).toBeUndefined();
    expect(after.sample.documents[0]!.analysis.sampling?.firstTimestep).toBe(999);
  });

  it('a second run changes nothing', () => {
    const again = planRunRescale(inputs(pair, train, sample));
    expect(again.empty).toBe(true);
    expect(again.files.every((f) => f.textEdits?.length === 0)).toBe(true);
  });

  it('keeps every comment of both files', () => {
    if (pair.format === 'json') return expect(comments(pair.train, 'json')).toEqual([]);
    for (const [before, after] of [
      [pair.train, train],
      [pair.sample, sample],
    ]) {
      expect(comments(after!, pair.format)).toEqual(comments(before!, pair.format));
    }
  });

  it('reports the numbers shared-math gives before and after', () => {
    // Scaled linear 0.00085 -> 0.012 over T = 1000 (the short family's "linear" reads the same):
    // sqrt(abar_T) = 0.068265, SNR_T = 0.004682 (Lin et al. 2023, Table 1, recalled from memory).
    const ref = computeSchedule({ kind: 'scaled_linear', trainSteps: 1000, betaStart: 0.00085, betaEnd: 0.012 });
    const rescaled = computeSchedule({ kind: 'scaled_linear', trainSteps: 1000, betaStart: 0.00085, betaEnd: 0.012, rescaleZeroSnr: true });
    expect(ref.ok && rescaled.ok).toBe(true);
    if (!ref.ok || !rescaled.ok) return;
    const row = plan.numbers.find((n) => n.path === `sample.${pair.ext}`)!;
    expect(row.terminalSignal.before).toBeCloseTo(0.068265, 5);
    expect(row.terminalSignal.before).toBe(ref.value.terminalSignal);
    expect(row.terminalSnr.before).toBeCloseTo(0.004682, 5);
    // Lin et al. 2023, Algorithm 1: exactly zero at the last step.
    expect(row.terminalSnr.after).toBe(0);
    expect(row.terminalSignal.after).toBe(0);
    // Trailing starts at T - 1 (DESIGN section 4: round(arange(T, 0, -T/N)) - 1), where SNR is 0.
    const steps = after(pair).sampling!.steps;
    const trailing = samplingTimesteps('trailing', 1000, steps, 0);
    expect(trailing.ok && trailing.value[0]).toBe(999);
    expect(row.firstTimestep.after).toBe(999);
    expect(row.snrAtFirst.after).toBe(snrFromAlphaBar(rescaled.value.alphaBar[999]!));
    expect(row.snrAtFirst.after).toBe(0);
    // Before: the file's own first step on the leaky schedule, its SNR from the same curve.
    const first = row.firstTimestep.before!;
    expect(row.snrAtFirst.before).toBeCloseTo(snrFromAlphaBar(ref.value.alphaBar[first]!), 12);
    // 0.7 where guidance > 1 (common practice, Lin et al. 2023 use 0.7 with 7.5).
    expect(row.guidanceRescale).toEqual({ before: 0, after: 0.7 });
  });

  function after(p: RunPair) {
    return readFile(p.sample, { path: 's', format: p.format, partners: partnersOf(p), pairRole: 'sampling' }).documents[0]!.analysis;
  }
});

describe('run rescale: variants', () => {
  const yaml = RUN_PAIRS[0]!;

  it('sampling-only changes only spacing and guidance rescale, and the training file not at all', () => {
    const plan = planRunRescale(inputs(yaml, yaml.train, yaml.sample), { samplingOnly: true });
    expect(plan.changesTraining).toBe(false);
    expect(plan.files.find((f) => f.side === 'training')!.changes).toEqual([]);
    const concepts = plan.files.flatMap((f) => f.changes.flatMap((c) => c.edits.map((e) => e.concept)));
    expect(concepts.sort()).toEqual(['guidanceRescale', 'stepsOffset', 'timestepSpacing'].filter((c) => concepts.includes(c as never)));
    expect(concepts).toContain('timestepSpacing');
    expect(concepts).toContain('guidanceRescale');
    expect(concepts).not.toContain('zeroTerminalSnr');
    expect(concepts).not.toContain('predictionTarget');
  });

  it('a sigma-space sampler: the plan says what the sampling code must do, and the finding that remains says it too', () => {
    const jsonc = RUN_PAIRS.find((p) => p.format === 'jsonc')!;
    const plan = planRunRescale(inputs(jsonc, jsonc.train, jsonc.sample));
    expect(plan.notes).toEqual([expect.stringContaining('the sampling code must clamp abar at the last training step to 2^-24')]);
    const train = applied(plan, 'train.jsonc', jsonc.train);
    const sample = applied(plan, 'sample.jsonc', jsonc.sample);
    const after = analysePair(jsonc, train, sample);
    const sigma = after.sample.findings.find((f) => f.rule === 'infinite-sigma-at-zero-snr');
    expect(sigma?.message).toContain('must clamp abar there to 2^-24');
    // sigma = sqrt((1 - abar) / abar) at abar = 2^-24 is about 4096 (DESIGN section 4, common practice).
    expect(Math.sqrt((1 - ZERO_SNR_ALPHA_BAR_CLAMP) / ZERO_SNR_ALPHA_BAR_CLAMP)).toBeCloseTo(4096, 0);
    const row = plan.numbers.find((n) => n.path === 'sample.jsonc')!;
    expect(row.firstSigma?.after).toBe(Infinity);
  });

  it('an explicit beta list is replaced by its rescale: the last beta becomes exactly 1 (Lin et al. 2023, Algorithm 1)', () => {
    const train = `{
  "trained_betas": [0.0001, 0.002, 0.02, 0.1, 0.3],
  "prediction_type": "epsilon",
  "snr_gamma": 5
}
`;
    const sample = `{ "num_inference_steps": 5, "guidance_scale": 5 }\n`;
    const pair = { format: 'json' as const, ext: 'json' as const };
    const plan = planRunRescale(inputs(pair, train, sample));
    const newTrain = applied(plan, 'train.json', train);
    const betas = JSON.parse(newTrain).trained_betas as number[];
    expect(betas[4]).toBe(1);
    expect(betas[0]).toBeCloseTo(0.0001, 10);
    const after = analysePair(pair, newTrain, applied(plan, 'sample.json', sample));
    expect([...after.train.findings, ...after.sample.findings].filter((f) => RUN_FIXED_RULES.includes(f.rule))).toEqual([]);
  });

  it('a file alone: a leaky training file with its own sampling settings', () => {
    const text = `noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  timestep_spacing: leading
num_inference_steps: 20
guidance_scale: 7.5
noise_offset: 0.1
`;
    const plan = planRunRescale([{ path: 'all.yaml', side: 'alone', reading: readFile(text, { path: 'all.yaml' }) }]);
    const after = applied(plan, 'all.yaml', text);
    expect(readFile(after, { path: 'all.yaml' }).documents[0]!.setup.fields.zeroTerminalSnr?.value).toBe(true);
    const findings = analysePair({ format: 'yaml', ext: 'yaml' }, 'x: 1\n', after).sample.findings;
    expect(findings.filter((f) => RUN_FIXED_RULES.includes(f.rule))).toEqual([]);
    expect(planRunRescale([{ path: 'all.yaml', side: 'alone', reading: readFile(after, { path: 'all.yaml' }) }]).empty).toBe(true);
  });
});
