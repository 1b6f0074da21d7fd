/** The project file's `consumers:` setting chooses consumer and loader per glob; bad entries are one-line errors. */
import { describe, expect, it } from 'vitest';
import { analyzeText } from '../../server/src/engine/api';
import { consumerChoiceFor } from '../../server/src/consumers/choice';
import { parseProjectFile, ProjectFileError } from '../../server/src/workspace/projectFile';

const project = (text: string) => parseProjectFile(text, '/studio/noiselint.project.yaml');

describe('consumers setting', () => {
  it('matches globs relative to the project root, first entry wins', () => {
    const p = project(
      'consumers:\n  - files: "sched/**/*.yaml"\n    consumer: scheduler-config\n    class: EulerDiscreteScheduler\n' +
        '  - files: ["**/*.yaml"]\n    dialect: pyyaml\n',
    );
    expect(consumerChoiceFor(p, '/studio/sched/night/a.yaml')).toEqual({
      glob: 'sched/**/*.yaml',
      family: 'scheduler-config',
      className: 'EulerDiscreteScheduler',
    });
    expect(consumerChoiceFor(p, '/studio/train/b.yaml')).toEqual({ glob: '**/*.yaml', dialect: 'pyyaml' });
    expect(consumerChoiceFor(p, '/elsewhere/c.yaml')).toBeUndefined();
  });

  it('applies the chosen class to a file without a class-name key, and says so', () => {
    const p = project('consumers:\n  - files: "sched/*.yaml"\n    consumer: scheduler-config\n    class: EulerDiscreteScheduler\n');
    const text = '# Lanternfish Pictures: preview scheduler\nnum_train_timesteps: 1000\nbeta_schedule: squaredcos_cap_v2\nprediction_type: epsilon\n';
    const r = analyzeText(text, { path: '/studio/sched/preview.yaml', project: p });
    const setup = r.documents[0]!.setup;
    expect(setup.consumer?.decision).toMatchObject({
      family: 'scheduler-config',
      className: 'EulerDiscreteScheduler',
      basis: 'project',
      dialect: 'pyyaml',
    });
    // Euler's default spacing (diffusers 0.30, scheduling_euler_discrete.py), not the generic leading.
    expect(setup.fields.timestepSpacing?.value).toBe('linspace');
  });

  it.each([
    ['consumers: {}\n', 'consumers: must be a list'],
    ['consumers:\n  - consumer: scheduler-config\n', 'consumers[0].files: is required'],
    ['consumers:\n  - files: "*.json"\n    consumer: schedulers\n', 'consumers[0].consumer: must be one of'],
    ['consumers:\n  - files: "*.json"\n    consumer: scheduler-config\n    class: DDIM\n', 'consumers[0].class: must be a class of scheduler-config'],
    ['consumers:\n  - files: "*.json"\n    dialect: yaml12\n', 'consumers[0].dialect: must be one of'],
    ['consumers:\n  - files: "*.json"\n', 'consumers[0]: sets neither a consumer nor a dialect'],
  ])('rejects %j', (text, message) => {
    expect(() => project(text)).toThrow(ProjectFileError);
    expect(() => project(text)).toThrow(message);
  });
});
