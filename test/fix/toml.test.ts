/**
 * Concept edits on TOML: values replaced in place (quoting kept), keys inserted into their table
 * (after a `[table]` header's last sibling, with a dotted prefix, in an `[[array]]` table, in an
 * inline table), keys removed keeping a comment at the end of their line. Each result is parsed
 * again and read back (helpers.checkFix). TOML grammar facts: TOML v1.0.0 specification
 * (Preston-Werner and Gedda 2021). All configs are invented Lanternfish Pictures data.
 */
import { describe, expect, it } from 'vitest';
import { applyEdits } from '../../server/src/fix';
import { isScalarToken } from '../../server/src/fix/render';
import { checkFix, lines, render, type FixCase } from './helpers';

const cases: FixCase[] = [
  {
    name: 'set a number in a [table]; the comment on the line survives',
    before: lines('[sampling]', 'guidance_scale = 7.5   # strong guidance for dark frames', 'guidance_rescale = 0.0 # off for now', ''),
    edits: [{ kind: 'set', concept: 'guidanceRescale', value: 0.7 }],
    after: lines('[sampling]', 'guidance_scale = 7.5   # strong guidance for dark frames', 'guidance_rescale = 0.7 # off for now', ''),
  },
  {
    name: 'set a boolean (TOML booleans are lower case)',
    before: lines('[scheduler]', 'num_train_timesteps = 1000', 'beta_schedule = "scaled_linear"', 'rescale_betas_zero_snr = false', ''),
    edits: [{ kind: 'set', concept: 'zeroTerminalSnr', value: true }],
    after: lines('[scheduler]', 'num_train_timesteps = 1000', 'beta_schedule = "scaled_linear"', 'rescale_betas_zero_snr = true', ''),
  },
  {
    name: 'set an enum: a basic string stays basic, a literal string stays literal',
    before: lines('prediction_type = "epsilon"', "timestep_spacing = 'leading'", 'beta_schedule = "scaled_linear"', ''),
    edits: [
      { kind: 'set', concept: 'predictionTarget', value: 'v' },
      { kind: 'set', concept: 'timestepSpacing', value: 'trailing' },
    ],
    after: lines('prediction_type = "v_prediction"', "timestep_spacing = 'trailing'", 'beta_schedule = "scaled_linear"', ''),
  },
  {
    name: 'set an integer written with underscores; a float written as an exponent keeps its notation',
    before: lines('num_train_timesteps = 1_000', 'beta_schedule = "linear"', 'beta_start = 1e-4', 'num_inference_steps = 2_000', ''),
    edits: [
      { kind: 'set', concept: 'sampleSteps', value: 1000 },
      { kind: 'set', concept: 'betaStart', value: 0.00085 },
    ],
    after: lines('num_train_timesteps = 1_000', 'beta_schedule = "linear"', 'beta_start = 8.5e-4', 'num_inference_steps = 1000', ''),
  },
  {
    name: 'insert after the last sibling of a [table], before the next header and its comment',
    before: lines(
      '[noise_scheduler]',
      'num_train_timesteps = 1000',
      'beta_schedule = "scaled_linear"',
      '',
      '# optimiser',
      '[training]',
      'learning_rate = 1e-6',
      '',
    ),
    edits: [{ kind: 'set', concept: 'zeroTerminalSnr', value: true }],
    after: lines(
      '[noise_scheduler]',
      'num_train_timesteps = 1000',
      'beta_schedule = "scaled_linear"',
      'rescale_betas_zero_snr = true',
      '',
      '# optimiser',
      '[training]',
      'learning_rate = 1e-6',
      '',
    ),
  },
  {
    name: 'insert with the dotted prefix of the sibling key, keeping its indentation',
    before: lines(
      'run = "lf-night-ft-015"',
      '  model.scheduler.beta_schedule = "scaled_linear"',
      '  model.scheduler.num_train_timesteps = 1000',
      '[data]',
      'path = "/mnt/night"',
      '',
    ),
    edits: [{ kind: 'set', concept: 'zeroTerminalSnr', value: true }],
    after: lines(
      'run = "lf-night-ft-015"',
      '  model.scheduler.beta_schedule = "scaled_linear"',
      '  model.scheduler.num_train_timesteps = 1000',
      '  model.scheduler.rescale_betas_zero_snr = true',
      '[data]',
      'path = "/mnt/night"',
      '',
    ),
  },
  {
    name: 'insert into a [[array]] table: the new key follows its guidance sibling in that table',
    before: lines(
      '[[previews]]',
      'name = "dusk"',
      'guidance_scale = 7.5',
      'timestep_spacing = "trailing"',
      '',
      '[scheduler]',
      'num_train_timesteps = 1000',
      '',
    ),
    edits: [{ kind: 'set', concept: 'guidanceRescale', value: 0.7 }],
    after: lines(
      '[[previews]]',
      'name = "dusk"',
      'guidance_scale = 7.5',
      'guidance_rescale = 0.7',
      'timestep_spacing = "trailing"',
      '',
      '[scheduler]',
      'num_train_timesteps = 1000',
      '',
    ),
  },
  {
    name: 'insert after a multi-line array value',
    before: lines('[scheduler]', 'trained_betas = [', '  0.0001,', '  0.02,', ']', ''),
    edits: [{ kind: 'set', concept: 'zeroTerminalSnr', value: true }],
    after: lines('[scheduler]', 'trained_betas = [', '  0.0001,', '  0.02,', ']', 'rescale_betas_zero_snr = true', ''),
  },
  {
    name: 'insert at the end of a file without a final line break',
    before: '[sampling]\nguidance_scale = 7.5',
    edits: [{ kind: 'set', concept: 'guidanceRescale', value: 0.7 }],
    after: '[sampling]\nguidance_scale = 7.5\nguidance_rescale = 0.7',
  },
  {
    name: 'insert with CRLF line endings',
    before: '[sampling]\r\nguidance_scale = 7.5\r\n',
    edits: [{ kind: 'set', concept: 'guidanceRescale', value: 0.7 }],
    after: '[sampling]\r\nguidance_scale = 7.5\r\nguidance_rescale = 0.7\r\n',
  },
  {
    name: 'insert into an inline table after the last sibling (one line, no trailing comma)',
    before: lines('sampling = { guidance_scale = 7.5, num_inference_steps = 30 }', ''),
    edits: [{ kind: 'set', concept: 'guidanceRescale', value: 0.7 }],
    after: lines('sampling = { guidance_scale = 7.5, num_inference_steps = 30, guidance_rescale = 0.7 }', ''),
  },
  {
    name: 'remove a key asked to keep its comment: the comment at the end of its line stays',
    before: lines('[train]', 'noise_offset = 0.05  # brighter skies', 'learning_rate = 2e-6', ''),
    edits: [{ kind: 'remove', concept: 'offsetNoise', keepComment: true }],
    after: lines('[train]', '# brighter skies', 'learning_rate = 2e-6', ''),
  },
  {
    name: 'remove a key: its line goes with the comment at its end, and the edit says it touches a comment',
    before: lines('[train]', '# above: stays', 'noise_offset = 0.05  # brighter skies', 'learning_rate = 2e-6', ''),
    edits: [{ kind: 'remove', concept: 'offsetNoise' }],
    after: lines('[train]', '# above: stays', 'learning_rate = 2e-6', ''),
    touchesComment: true,
  },
  {
    name: 'remove a key without a comment: its whole line goes; an emptied table is valid TOML',
    before: lines('# the comment above stays', '[train]', 'noise_offset = 0.05', '[sampling]', 'guidance_scale = 7.5', ''),
    edits: [{ kind: 'remove', concept: 'offsetNoise' }],
    after: lines('# the comment above stays', '[train]', '[sampling]', 'guidance_scale = 7.5', ''),
  },
  {
    name: 'remove a dotted key on the last line without a line break',
    before: 'noise_scheduler.beta_schedule = "linear"\ntrain.noise_offset = 0.1',
    edits: [{ kind: 'remove', concept: 'offsetNoise' }],
    after: 'noise_scheduler.beta_schedule = "linear"',
  },
  {
    name: 'remove a member of an inline table with its comma',
    before: lines('train = { noise_offset = 0.1, learning_rate = 2e-6 }', ''),
    edits: [{ kind: 'remove', concept: 'offsetNoise' }],
    after: lines('train = { learning_rate = 2e-6 }', ''),
  },
  {
    name: 'rewrite an explicit beta list in its own layout',
    before: lines('num_train_timesteps = 3', 'trained_betas = [0.1, 0.2, 0.5]', ''),
    edits: [{ kind: 'set', concept: 'betas', value: [0.1, 0.2, 1] }],
    after: lines('num_train_timesteps = 3', 'trained_betas = [0.1, 0.2, 1.0]', ''),
  },
  {
    name: 'gives up on a multi-line string value',
    before: lines('beta_schedule = """', 'scaled_linear"""', ''),
    edits: [{ kind: 'set', concept: 'betaSchedule', value: 'linear' }],
    after: null,
  },
];

describe('TOML fixes', () => {
  for (const c of cases) it(c.name, () => checkFix({ format: 'toml', ...c }));

  it('never writes a token TOML v1.0.0 refuses', () => {
    // The spec's invalid floats: ".7", "7.", "3.e+20"; booleans are lower case; no null.
    for (const bad of ['.7', '7.', '3.e+20', 'True', 'null', "'a'b'", '"\\/"']) expect(isScalarToken(bad, 'toml'), bad).toBe(false);
    for (const good of ['0.7', '-1.0e-4', '+3', '1e-4', 'true', '"trailing"', "'trailing'", '"\\u00e9"'])
      expect(isScalarToken(good, 'toml'), good).toBe(true);
  });

  it('gives up rather than insert after a key/value line that shares its line with a header', () => {
    // Not valid TOML anyway; the renderer must not produce text either way.
    const edits = render('[sampling] guidance_scale = 7.5\n', [{ kind: 'set', concept: 'guidanceRescale', value: 0.7 }], 'toml');
    expect(edits).toBeNull();
  });

  it('a fixed file keeps every byte outside the edited lines', () => {
    const before = lines(
      '# top',
      '[noise_scheduler]  # stock',
      "beta_schedule = 'scaled_linear'",
      'num_train_timesteps = 1000',
      '',
      '[train]',
      'noise_offset = 0.1 # x',
      '',
    );
    const edits = render(
      before,
      [
        { kind: 'set', concept: 'zeroTerminalSnr', value: true },
        { kind: 'remove', concept: 'offsetNoise', keepComment: true },
      ],
      'toml',
    );
    expect(edits).not.toBeNull();
    const after = applyEdits(before, edits!);
    expect(after).toBe(
      lines(
        '# top',
        '[noise_scheduler]  # stock',
        "beta_schedule = 'scaled_linear'",
        'num_train_timesteps = 1000',
        'rescale_betas_zero_snr = true',
        '',
        '[train]',
        '# x',
        '',
      ),
    );
  });
});
