/**
 * The rule engine: locations, severities, options, suppressions, order, fixes, and that a failing
 * rule never stops the run.
 */
import { describe, expect, it } from 'vitest';
import { analyzeText, readFile } from '../../server/src/engine/api';
import { ruleOptions, runRules } from '../../server/src/engine/engine';
import type { Finding } from '../../server/src/base/findings';
import { RULES, getRule } from '../../server/src/rules';
import type { Rule, RuleFinding } from '../../server/src/rules/types';
import type { ResolvedProject, RuleSetting } from '../../server/src/workspace/types';

const LEAKY = `# Lanternfish Pictures: night storyboard fine-tune
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  prediction_type: v_prediction
`;

function project(rules: Record<string, RuleSetting>, extra: Partial<ResolvedProject> = {}): ResolvedProject {
  return { file: null, root: '/', include: [], exclude: [], rules, aliases: {}, pairs: [], autoPair: false, limits: {}, ...extra };
}

function fakeRule(id: string, check: Rule['check'], options: Rule['meta']['options'] = {}): Rule {
  return {
    meta: { id, summary: id, defaultSeverity: 'warning', repair: { effects: ['sampling-only'], everyFinding: false }, options, docs: '' },
    check,
  };
}

function run(text: string, rules: readonly Rule[], opts: { project?: ResolvedProject; path?: string } = {}) {
  const path = opts.path ?? 'config.yaml';
  const errors: [string, unknown][] = [];
  const file = readFile(text, { path, project: opts.project });
  const findings = runRules(file, { path, project: opts.project }, { rules, onRuleError: (id, e) => errors.push([id, e]) });
  return { findings, errors };
}

const slice = (text: string, f: Finding) => text.slice(f.span.start, f.span.end);

describe('a failing rule', () => {
  it('yields no findings, is reported, and the other rules still run', () => {
    const boom = fakeRule('boom', () => {
      throw new Error('rule bug');
    });
    const { findings, errors } = run(LEAKY, [boom, getRule('terminal-snr-leak')!]);
    expect(errors.map(([id]) => id)).toEqual(['boom']);
    expect(findings.map((f) => f.rule)).toEqual(['terminal-snr-leak']);
  });

  it('survives results that are not findings and findings that point at nothing', () => {
    const junk = fakeRule('junk', () => 'not a list' as unknown as RuleFinding[]);
    const broken = fakeRule('broken', () => [{ message: 'x', source: {} as never }]);
    const { findings, errors } = run(LEAKY, [junk, broken, getRule('terminal-snr-leak')!]);
    expect(findings.map((f) => f.rule)).toEqual(['terminal-snr-leak']);
    // Neither is dropped silently: both rules are reported, the junk one with what it returned.
    expect(errors.map(([id]) => id)).toEqual(['junk', 'broken']);
    expect(String(errors[0]![1])).toMatch(/returned string, not a list of findings/);
  });

  it('a throwing logger does not stop the run either', () => {
    const boom = fakeRule('boom', () => {
      throw new Error('rule bug');
    });
    const file = readFile(LEAKY, { path: 'c.yaml' });
    const findings = runRules(
      file,
      { path: 'c.yaml' },
      {
        rules: [boom, getRule('terminal-snr-leak')!],
        onRuleError: () => {
          throw new Error('logger bug');
        },
      },
    );
    expect(findings).toHaveLength(1);
  });
});

describe('severity and options', () => {
  it('a configured severity overrides the tier severity of the finding', () => {
    const linear = `num_train_timesteps: 1000\nbeta_schedule: linear\nprediction_type: v_prediction\n`;
    // Linear 1e-4 -> 0.02 ends at amplitude 6.4e-3 (Lin et al. 2023, Table 1, from memory): the information tier.
    expect(run(linear, RULES).findings.find((f) => f.rule === 'terminal-snr-leak')?.severity).toBe('info');
    const p = project({ 'terminal-snr-leak': { severity: 'error' } });
    expect(run(linear, RULES, { project: p }).findings.find((f) => f.rule === 'terminal-snr-leak')?.severity).toBe('error');
  });

  it('"off" turns a rule off', () => {
    const p = project({ 'terminal-snr-leak': { severity: 'off' } });
    expect(run(LEAKY, RULES, { project: p }).findings.map((f) => f.rule)).not.toContain('terminal-snr-leak');
  });

  it('options override defaults only with a value of the same type', () => {
    const meta = getRule('terminal-snr-leak')!.meta;
    expect(ruleOptions(meta, undefined)).toEqual({ warnSignal: 0.01, infoSignal: 1e-4 });
    const p = project({ 'terminal-snr-leak': { options: { warnSignal: 0.1, infoSignal: 'high', unknown: 3 } } });
    expect(ruleOptions(meta, p)).toEqual({ warnSignal: 0.1, infoSignal: 1e-4 });
  });

  it('passes merged options to the rule', () => {
    let seen: Record<string, unknown> = {};
    const spy = fakeRule(
      'spy',
      (ctx) => {
        seen = ctx.options;
        return [];
      },
      { a: { default: 1, description: '' }, b: { default: 'x', description: '' } },
    );
    run(LEAKY, [spy], { project: project({ spy: { options: { a: 2 } } }) });
    expect(seen).toEqual({ a: 2, b: 'x' });
  });
});

describe('locations', () => {
  const text = `# Lanternfish Pictures: location checks
noise_scheduler:
  num_train_timesteps: 1000
  trained_betas:
    - 0.1
    - 0.2
sampling:
  num_inference_steps: 30
`;
  const at = (r: RuleFinding) => fakeRule('loc', () => [r]);

  it('covers `key: value` of a scalar field', () => {
    const { findings } = run(text, [at({ message: 'm', at: 'trainSteps' })]);
    expect(slice(text, findings[0]!)).toBe('num_train_timesteps: 1000');
  });

  it('covers only the key of a field whose value is a block list', () => {
    const t2 = text.replace('num_train_timesteps: 1000', 'num_train_timesteps: 2');
    const { findings } = run(t2, [at({ message: 'm', at: 'betas' })]);
    expect(slice(t2, findings[0]!)).toBe('trained_betas');
  });

  it("falls back to the key of the section holding the concept's group siblings", () => {
    const { findings } = run(text, [at({ message: 'm', at: 'zeroTerminalSnr' })]);
    expect(slice(text, findings[0]!)).toBe('noise_scheduler');
    const { findings: f2 } = run(text, [at({ message: 'm', at: 'guidanceScale' })]);
    expect(slice(text, f2[0]!)).toBe('sampling');
  });

  it('falls back to the first content line when the siblings sit at the root (or there are none)', () => {
    const flat = `# Lanternfish Pictures: flat file\n\nnum_train_timesteps: 1000\nbeta_schedule: linear\n`;
    const { findings } = run(flat, [at({ message: 'm', at: 'zeroTerminalSnr' })]);
    expect(slice(flat, findings[0]!)).toBe('num_train_timesteps: 1000');
    const { findings: f2 } = run(flat, [at({ message: 'm' })]);
    expect(slice(flat, f2[0]!)).toBe('num_train_timesteps: 1000');
  });

  it('uses a key that is present but empty (`key:` / null) for its concept', () => {
    const t2 = `noise_scheduler:\n  num_train_timesteps: 1000\n  rescale_betas_zero_snr: null\n  beta_schedule: linear\n`;
    const { findings } = run(t2, [at({ message: 'm', at: 'zeroTerminalSnr' })]);
    expect(slice(t2, findings[0]!)).toBe('rescale_betas_zero_snr: null');
  });

  it('resolves related concepts and drops those the file does not set', () => {
    const { findings } = run(text, [
      at({
        message: 'm',
        at: 'trainSteps',
        related: [
          { concept: 'sampleSteps', message: 'steps here' },
          { concept: 'guidanceScale', message: 'not in the file' },
        ],
      }),
    ]);
    expect(findings[0]!.related.map((r) => [slice(text, { ...findings[0]!, span: r.span }), r.message])).toEqual([
      ['num_inference_steps: 30', 'steps here'],
    ]);
  });
});

describe('fixes', () => {
  const setSpacing = { kind: 'set', concept: 'timestepSpacing', value: 'trailing' } as const;
  const text = `# Lanternfish Pictures\nscheduler:\n  num_train_timesteps: 1000\n  beta_schedule: linear\n  timestep_spacing: leading\nnum_inference_steps: 10\n`;

  it('drops fixes that cannot be rendered and marks one preferred', () => {
    const rule = fakeRule('fixes', () => [
      {
        message: 'm',
        at: 'timestepSpacing',
        fixes: [
          // latentSpace has no key to insert: the renderer gives up.
          { title: 'impossible', effect: 'sampling-only', edits: [{ kind: 'set', concept: 'latentSpace', value: true }] },
          { title: 'first', effect: 'sampling-only', edits: [setSpacing] },
          { title: 'second', effect: 'sampling-only', preferred: true, edits: [{ kind: 'set', concept: 'sampleSteps', value: 20 }] },
          { title: 'empty', effect: 'sampling-only', edits: [] },
        ],
      },
    ]);
    const { findings } = run(text, [rule]);
    expect(findings[0]!.fixes.map((f) => [f.title, f.preferred])).toEqual([
      ['first', false],
      ['second', true],
    ]);
  });

  it('prefers the first fix when the rule names none, and at most one when it names several', () => {
    const rule = fakeRule('fixes', () => [
      {
        message: 'm',
        fixes: [
          { title: 'a', effect: 'sampling-only', edits: [setSpacing] },
          { title: 'b', effect: 'sampling-only', preferred: true, edits: [{ kind: 'set', concept: 'sampleSteps', value: 20 }] },
          { title: 'c', effect: 'sampling-only', preferred: true, edits: [{ kind: 'set', concept: 'sampleSteps', value: 30 }] },
        ],
      },
      {
        message: 'n',
        fixes: [
          { title: 'only', effect: 'sampling-only', edits: [setSpacing] },
          { title: 'next', effect: 'sampling-only', edits: [setSpacing] },
        ],
      },
    ]);
    const { findings } = run(text, [rule]);
    const m = findings.find((f) => f.message === 'm')!;
    const n = findings.find((f) => f.message === 'n')!;
    expect(m.fixes.map((f) => f.preferred)).toEqual([false, true, false]);
    expect(n.fixes.map((f) => f.preferred)).toEqual([true, false]);
  });

  it('puts the written value into a title with {newText}', () => {
    const rule = fakeRule('title', () => [
      { message: 'm', fixes: [{ title: 'Write {newText} instead', effect: 'sampling-only', edits: [setSpacing] }] },
    ]);
    const { findings } = run(text, [rule]);
    expect(findings[0]!.fixes[0]!.title).toBe('Write "trailing" instead');
  });
});

describe('suppressions, order and duplicates', () => {
  it('drops findings on the line after a deliberate comment, and everywhere with deliberate throughout', () => {
    const text = LEAKY.replace(
      '  beta_schedule:',
      '  # noiselint: deliberate terminal-snr-leak because the base checkpoint cannot change\n  beta_schedule:',
    );
    expect(run(text, RULES).findings.map((f) => f.rule)).toEqual([]);
    const other = LEAKY.replace('  beta_schedule:', '  # noiselint: deliberate sampler-skips-last-step\n  beta_schedule:');
    expect(run(other, RULES).findings.map((f) => f.rule)).toEqual(['terminal-snr-leak']);
    const whole = `# noiselint: deliberate throughout all because an archived run\n${LEAKY}`;
    expect(run(whole, RULES).findings).toEqual([]);
    // The old spelling of the comment is no directive: nothing is kept quiet, and the comment is named.
    const old = LEAKY.replace('  beta_schedule:', '  # noiselint: allow terminal-snr-leak -- base checkpoint\n  beta_schedule:');
    const oldFindings = run(old, RULES).findings;
    expect(oldFindings.map((f) => f.rule).sort()).toEqual(['parse-error', 'terminal-snr-leak']);
    expect(oldFindings.find((f) => f.rule === 'parse-error')!.message).toContain('"noiselint: allow" is not a noiselint comment');
  });

  it('reports a misspelled rule id in a deliberate comment at the id, with the closest id', () => {
    const text = LEAKY.replace(
      '  beta_schedule:',
      '  # noiselint: deliberate terminal-snr-leek, sampler-skips-last-step because kept\n  beta_schedule:',
    );
    const { findings } = run(text, RULES);
    // Nothing is kept quiet by the misspelled id: the leak is still reported.
    expect(findings.map((f) => f.rule)).toEqual(['unknown-rule-in-comment', 'terminal-snr-leak']);
    const typo = findings[0]!;
    expect(slice(text, typo)).toBe('terminal-snr-leek');
    expect(typo.severity).toBe('warning');
    expect(typo.message).toBe(
      '"terminal-snr-leek" in this noiselint comment names no rule, so it keeps nothing quiet (did you mean "terminal-snr-leak"?)',
    );
    const far = run(LEAKY.replace('  beta_schedule:', '  # noiselint: deliberate brightness\n  beta_schedule:'), RULES).findings;
    expect(far[0]!.message).toContain('`noiselint rules` lists the rule ids');
    // Not in files that hold no diffusion config.
    expect(run('title: notes\n# noiselint: deliberate terminal-snr-leek\n', RULES).findings).toEqual([]);
  });

  it('sorts by position and removes exact duplicates', () => {
    const text = `num_train_timesteps: 1000\nbeta_schedule: linear\nnum_inference_steps: 10\n`;
    const rule = fakeRule('order', () => [
      { message: 'late', at: 'sampleSteps' },
      { message: 'early', at: 'trainSteps' },
      { message: 'early', at: 'trainSteps' },
      { message: 'middle', at: 'betaSchedule' },
    ]);
    expect(run(text, [rule]).findings.map((f) => f.message)).toEqual(['early', 'middle', 'late']);
  });
});

describe('which files are checked', () => {
  it('leaves YAML that is not a diffusion config alone', () => {
    const ci = `name: render\non: [push]\njobs:\n  frames:\n    steps:\n      - run: make frames\n`;
    expect(analyzeText(ci, { path: '.ci/render.yaml' }).findings).toEqual([]);
  });

  it('reports parse problems of a recognisable config, with the configured severity', () => {
    const broken = `noise_scheduler:\n  num_train_timesteps: 1000\n  beta_schedule: [scaled_linear\n`;
    const plain = analyzeText(broken, { path: 'train.yaml' }).findings.filter((f) => f.rule === 'parse-error');
    expect(plain.length).toBeGreaterThan(0);
    expect(plain.every((f) => f.severity === 'error')).toBe(true);
    const downgraded = analyzeText(broken, { path: 'train.yaml', project: project({ 'parse-error': { severity: 'warning' } }) });
    expect(downgraded.findings.filter((f) => f.rule === 'parse-error').every((f) => f.severity === 'warning')).toBe(true);
    const off = analyzeText(broken, { path: 'train.yaml', project: project({ 'parse-error': { severity: 'off' } }) });
    expect(off.findings.filter((f) => f.rule === 'parse-error')).toEqual([]);
  });

  it('hands the paired documents and the pair role to the rules', () => {
    let seen: { partners: number; role?: string } | null = null;
    const spy = fakeRule('spy', (ctx) => {
      seen = { partners: ctx.partners.length, role: ctx.pairRole };
      return [];
    });
    const partner = readFile(LEAKY, { path: 'train.yaml' }).documents.map((d) => ({ path: 'train.yaml', setup: d.setup, analysis: d.analysis }));
    const file = readFile(LEAKY, { path: 'sample.yaml' });
    runRules(file, { path: 'sample.yaml', partners: partner, pairRole: 'sampling' }, { rules: [spy] });
    expect(seen).toEqual({ partners: 1, role: 'sampling' });
  });
});

describe('all rules together on one file', () => {
  it('reports each mistake of a typical broken setup once', () => {
    const text = `# Lanternfish Pictures: night storyboard, everything at once
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: true
  prediction_type: epsilon
  timestep_spacing: leading
  steps_offset: 1
train:
  noise_offset: 0.1
  snr_gamma: 5.0
sampling:
  num_inference_steps: 10
  guidance_scale: 7.5
  sampler: euler
`;
    const { findings, isDiffusionConfig } = analyzeText(text, { path: 'nsb.yaml' });
    expect(isDiffusionConfig).toBe(true);
    expect(findings.map((f) => f.rule).sort()).toEqual(
      [
        'epsilon-at-zero-snr',
        'guidance-overexposure',
        'infinite-sigma-at-zero-snr',
        'min-snr-division',
        'offset-noise-conflict',
        'sampler-skips-last-step',
      ].sort(),
    );
    expect(findings.find((f) => f.rule === 'sampler-skips-last-step')!.severity).toBe('error');
    const starts = findings.map((f) => f.span.start);
    expect([...starts].sort((a, b) => a - b)).toEqual(starts);
  });
});
