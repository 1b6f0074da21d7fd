/**
 * A sampling file with a training partner is analysed with the partner's schedule and target for
 * every concept it does not set itself; those values are never a mismatch.
 */
import { computeSchedule, samplingTimesteps, snrFromAlphaBar } from '@noiselint/shared-math';
import { describe, expect, it } from 'vitest';
import { analyzeRead, analyzeText, readFile } from '../../server/src/engine/api';
import { hoverModelAt } from '../../server/src/views/hover';
import { inlineHintsFor } from '../../server/src/views/inlayHints';
import { plotDataFor } from '../../server/src/views/plotData';
import { explainDocumentJson, formatExplainText } from '../../server/src/views/explainFormat';
import { inheritanceFrom, inheritSetup } from '../../server/src/setup/inherit';
import { runCli } from '../cli/check-helpers';
import { useTempTrees } from '../workspace/helpers';
import { analysePair, partnersOf } from './pairs';

const tree = useTempTrees();

/** The zero-SNR velocity training file of the new-user check. */
const ZERO_SNR_V_TRAIN = `# Lanternfish Pictures: night storyboard model, rescaled (nsb-022)
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: true
  prediction_type: v_prediction
training:
  snr_gamma: 5.0
`;

const SAMPLING_ONLY = `# Lanternfish Pictures: previews for nsb-022
num_inference_steps: 30
guidance_scale: 7.5
timestep_spacing: trailing
`;

const yaml = { format: 'yaml' as const, ext: 'yaml' as const };

describe('a sampling-only file takes its partner schedule', () => {
  it('reads T, the schedule, the rescale and the target from the training file, each with its origin', () => {
    const { sample } = analysePair(yaml, ZERO_SNR_V_TRAIN, SAMPLING_ONLY);
    const setup = sample.documents[0]!.setup;
    expect(setup.inherited?.from).toBe('train.yaml');
    expect(setup.fields.betaSchedule).toMatchObject({ value: 'scaled_linear', assumed: false, source: null });
    expect(setup.fields.betaSchedule?.inherited).toEqual({ from: 'train.yaml', key: 'noise_scheduler.beta_schedule', assumedThere: false });
    expect(setup.fields.zeroTerminalSnr?.value).toBe(true);
    expect(setup.fields.predictionTarget?.value).toBe('v');
    expect(setup.fields.trainSteps?.value).toBe(1000);
    expect(setup.assumed).not.toContain('betaSchedule');
    // The numbers are the partner's: exactly zero terminal SNR (Lin et al. 2023, Algorithm 1).
    const schedule = sample.documents[0]!.analysis.schedule!;
    const reference = computeSchedule({ kind: 'scaled_linear', trainSteps: 1000, betaStart: 0.00085, betaEnd: 0.012, rescaleZeroSnr: true });
    expect(reference.ok).toBe(true);
    if (!reference.ok) return;
    expect(schedule.kind).toBe('scaled_linear');
    expect(schedule.terminalSnr).toBe(0);
    expect(schedule.rescaleApplied).toBe(true);
    expect(schedule.curve.alphaBar[500]).toBe(reference.value.alphaBar[500]);
  });

  it('reports no mismatch on values it never wrote (the new-user check: five errors before)', () => {
    const sampling = `num_inference_steps: 30
guidance_scale: 7.5
`;
    const { sample } = analysePair(yaml, ZERO_SNR_V_TRAIN, sampling);
    expect(sample.findings.filter((f) => f.rule === 'train-sample-mismatch')).toEqual([]);
    // Leading spacing (assumed) on the inherited zero-SNR schedule skips step 999: an error that names the origin.
    const skip = sample.findings.find((f) => f.rule === 'sampler-skips-last-step');
    expect(skip?.severity).toBe('error');
    expect(skip?.message).toContain('(schedule from training file train.yaml)');
    // First step of leading spacing, T = 1000, N = 30: floor(1000/30) = 33, 29 * 33 = 957 (DESIGN section 4 formula).
    const leading = samplingTimesteps('leading', 1000, 30, 0);
    expect(leading.ok && leading.value[0]).toBe(957);
    expect(skip?.message).toContain('first sampling step is 957');
  });

  it.each([
    ['yaml', 'yaml', 'num_inference_steps: 30\nguidance_scale: 7.5\n'],
    ['json', 'json', '{ "num_inference_steps": 30, "guidance_scale": 7.5 }\n'],
    ['jsonc', 'jsonc', '// previews\n{ "num_inference_steps": 30, /* strong */ "guidance_scale": 7.5 }\n'],
  ] as const)('reports 7.5 guidance without rescale on the inherited zero-SNR schedule in %s', (format, ext, sampling) => {
    const { sample } = analysePair({ format, ext }, ZERO_SNR_V_TRAIN, sampling, yaml);
    const guidance = sample.findings.find((f) => f.rule === 'guidance-overexposure');
    expect(guidance?.message).toContain('guidance scale 7.5 with no guidance rescale');
    expect(guidance?.message).toContain('train.yaml');
    expect(sample.findings.some((f) => f.rule === 'train-sample-mismatch')).toBe(false);
  });

  it('still reports a value the sampling file writes that disagrees, and only that one', () => {
    const sampling = `scheduler:
  beta_schedule: linear
num_inference_steps: 30
timestep_spacing: trailing
`;
    const { sample } = analysePair(yaml, ZERO_SNR_V_TRAIN, sampling);
    const mismatches = sample.findings.filter((f) => f.rule === 'train-sample-mismatch');
    expect(mismatches.map((f) => f.message)).toEqual([
      expect.stringContaining("the sampling file's beta schedule is linear but the training file train.yaml uses scaled_linear"),
    ]);
    // Its own family stays; the range the training file writes explicitly is taken, T and the rescale too.
    const setup = sample.documents[0]!.setup;
    expect(setup.fields.betaSchedule?.value).toBe('linear');
    expect(setup.fields.betaStart?.inherited?.key).toBe('noise_scheduler.beta_start');
    expect(setup.fields.zeroTerminalSnr?.inherited).toBeDefined();
  });

  it('a written value that agrees is no finding; the training side inherits nothing', () => {
    const sampling = `scheduler:
  prediction_type: v_prediction
num_inference_steps: 30
timestep_spacing: trailing
guidance_scale: 7.5
guidance_rescale: 0.7
`;
    const { train, sample } = analysePair(yaml, ZERO_SNR_V_TRAIN, sampling);
    expect(sample.findings).toEqual([]);
    expect(sample.documents[0]!.setup.fields.predictionTarget?.inherited).toBeUndefined();
    expect(train.documents[0]!.setup.inherited).toBeUndefined();
    expect(train.inheritance).toBeNull();
  });

  it('an explicit beta list is inherited with its length as T; the assumed parametric schedule is dropped', () => {
    const train = `{"trained_betas": [0.0001, 0.001, 0.01, 0.1, 0.5], "prediction_type": "v_prediction", "snr_gamma": 5}`;
    const sampling = `{"num_inference_steps": 5, "timestep_spacing": "trailing"}`;
    const { sample } = analysePair({ format: 'json', ext: 'json' }, train, sampling);
    const setup = sample.documents[0]!.setup;
    expect(setup.fields.betas?.value).toEqual([0.0001, 0.001, 0.01, 0.1, 0.5]);
    expect(setup.fields.betaSchedule).toBeUndefined();
    expect(setup.fields.betaStart).toBeUndefined();
    expect(setup.fields.trainSteps).toMatchObject({ value: 5, inherited: { from: 'train.json', assumedThere: true } });
    expect(sample.documents[0]!.analysis.schedule?.kind).toBe('explicit');
    // trailing with T = N = 5 visits every step from the last (DESIGN section 4: round(arange(T, 0, -T/N)) - 1).
    expect(sample.documents[0]!.analysis.sampling?.timesteps).toEqual([4, 3, 2, 1, 0]);
  });

  it('a flow-matching training file hands down its target, not betas; a continuous-sigma one nothing', () => {
    const flow = `model:\n  prediction_type: flow\n  shift: 3.0\ntraining:\n  resolution: 1024\n`;
    const p = partnersOf({ format: 'yaml', ext: 'yaml', train: flow });
    const inh = inheritanceFrom(p, 'sampling');
    expect(inh?.family).toBe('flow');
    const sample = readFile('num_inference_steps: 28\nguidance_scale: 3.5\n', { path: 's.yaml' });
    const setup = inheritSetup(sample.documents[0]!.setup, inh!);
    expect(setup.fields.predictionTarget?.value).toBe('flow');
    expect(setup.fields.betaSchedule?.inherited).toBeUndefined();
    const sigma = partnersOf({ format: 'yaml', ext: 'yaml', train: 'sigma_min: 0.002\nsigma_max: 80\nrho: 7\nresolution: 512\n' });
    expect(inheritanceFrom(sigma, 'sampling')).toBeNull();
    expect(inheritanceFrom(p, 'training')).toBeNull();
  });

  it('analyzeRead applies the partner values to a reading made without them (the role probe), as analyzeText does', () => {
    const partners = partnersOf({ format: 'yaml', ext: 'yaml', train: ZERO_SNR_V_TRAIN });
    const probe = readFile(SAMPLING_ONLY, { path: 'sample.yaml' });
    expect(probe.documents[0]!.setup.fields.betaSchedule?.value).toBe('linear');
    const later = analyzeRead(probe, { path: 'sample.yaml', partners, pairRole: 'sampling' });
    const direct = analyzeText(SAMPLING_ONLY, { path: 'sample.yaml', partners, pairRole: 'sampling' });
    expect(later.documents[0]!.setup.fields.betaSchedule?.value).toBe('scaled_linear');
    expect(later.findings.map((f) => f.message)).toEqual(direct.findings.map((f) => f.message));
    // Read again without partners: back to the file's own reading.
    const alone = analyzeRead(later, { path: 'sample.yaml', inherit: null });
    expect(alone.documents[0]!.setup.fields.betaSchedule?.value).toBe('linear');
    expect(alone.documents[0]!.setup.inherited).toBeUndefined();
  });
});

describe('the views show the inherited values', () => {
  const { sample } = analysePair(yaml, ZERO_SNR_V_TRAIN, SAMPLING_ONLY);

  it('hover: title and a line naming the training file and the values', () => {
    const at = SAMPLING_ONLY.indexOf('trailing');
    const model = hoverModelAt(sample, at)!;
    expect(model.title).toBe('noise schedule: scaled_linear, T = 1000, v target (from training file train.yaml)');
    expect(model.notes[0]).toContain('takes them from training file train.yaml');
    expect(model.notes[0]).toContain('zeroTerminalSnr true');
    // The terminal SNR row is the partner's: 0 exactly.
    expect(model.rows.find((r) => r.label.startsWith('terminal SNR'))?.current).toBe('0');
  });

  it('inlay hints: the terminal SNR hint sits on a sampling field and names the training file', () => {
    const hints = inlineHintsFor(sample);
    const schedule = hints.find((h) => h.kind === 'schedule');
    expect(schedule?.label).toBe('SNR_T 0 from train.yaml');
    expect(schedule?.tooltip).toContain('(schedule from training file train.yaml)');
    const sampling = hints.find((h) => h.kind === 'sampling');
    expect(sampling?.label).toBe('starts at 999/999');
  });

  it('plot data: the partner curve, labelled with its origin', () => {
    const plot = plotDataFor(sample, 'file:///sample.yaml', 1);
    expect(plot.documents[0]!.inheritedFrom).toBe('train.yaml');
    expect(plot.documents[0]!.label).toContain('from training file train.yaml');
    expect(plot.documents[0]!.terminalSnr).toBe(0);
    // The first sampled step is T - 1 = 999 at SNR 0 (zero terminal SNR).
    expect(plot.documents[0]!.sampled[0]).toMatchObject({ t: 999, snr: snrFromAlphaBar(0) });
  });

  it('explain: text and JSON name the inherited concepts and their file', () => {
    const text = formatExplainText(sample);
    expect(text).toContain('betaSchedule      scaled_linear  (from training file train.yaml: noise_scheduler.beta_schedule)');
    expect(text).toContain('schedule: scaled_linear, T = 1000, rescaled to zero terminal SNR');
    const json = explainDocumentJson(sample.documents[0]!);
    expect(json.setup.inheritedFrom).toBe('train.yaml');
    expect([...json.setup.inherited].sort()).toEqual([
      'betaEnd',
      'betaSchedule',
      'betaStart',
      'latentSpace',
      'predictionTarget',
      'trainSteps',
      'zeroTerminalSnr',
    ]);
    expect(json.schedule?.terminalSnr).toBe(0);
  });
});

describe('check and explain pair on disk', () => {
  it('explain pairs like check: the sampling file is explained with its training schedule', async () => {
    const root = tree({ 'night/train.yaml': ZERO_SNR_V_TRAIN, 'night/sample.yaml': SAMPLING_ONLY });
    const r = await runCli(['explain', 'night/sample.yaml', '--format', 'json'], root);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.stdout).files[0].documents[0];
    expect(doc.setup.inheritedFrom).toBe('night/train.yaml');
    expect(doc.schedule.terminalSnr).toBe(0);
    // The sampling file: what the inherited zero-SNR schedule implies for 7.5 guidance without
    // rescale; the training file: its own min-SNR note.
    const check = await runCli(['check', 'night', '--format', 'json'], root);
    const rules = JSON.parse(check.stdout).files.flatMap((f: { findings: { rule: string }[] }) => f.findings.map((x) => x.rule));
    expect(rules).toEqual(['guidance-overexposure', 'min-snr-drops-terminal-step']);
  });
});
