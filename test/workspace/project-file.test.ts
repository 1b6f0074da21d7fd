import { describe, expect, it } from 'vitest';
import { join, parse } from 'node:path';
import {
  DEFAULT_PROJECT,
  ProjectFileError,
  clearProjectCache,
  loadProject,
  parseProjectFile,
  resolveProjectData,
} from '../../server/src/workspace/project';
import type { RuleMeta } from '../../server/src/rules/types';
import { useTempTrees, writeTree } from './helpers';

const tree = useTempTrees();

/** The one-line error a project file gives, or null when it loads. */
function errorOf(text: string, name = 'noiselint.project.yaml', catalog: RuleMeta[] | null = null): string | null {
  try {
    parseProjectFile(text, `/p/${name}`, catalog ? new Map(catalog.map((r) => [r.id, r])) : null);
    return null;
  } catch (err) {
    expect(err).toBeInstanceOf(ProjectFileError);
    return (err as Error).message;
  }
}

const leakMeta: RuleMeta = {
  id: 'terminal-snr-leak',
  summary: 'test stand-in',
  defaultSeverity: 'warning',
  repair: { effects: ['needs-retraining'], everyFinding: false },
  options: { warnSignal: { default: 0.01, description: 'warning threshold' } },
  docs: '',
};

describe('loadProject: walking up', () => {
  it('finds the nearest project file above a file and resolves its root', () => {
    const root = tree({
      'noiselint.project.yaml': 'latentSpace: true\nrules:\n  guidance-overexposure: error\n',
      'runs/night/train.yaml': 'a: 1\n',
    });
    const project = loadProject(join(root, 'runs/night/train.yaml'));
    expect(project.file).toBe(join(root, 'noiselint.project.yaml'));
    expect(project.root).toBe(root);
    expect(project.latentSpace).toBe(true);
    expect(project.rules['guidance-overexposure']).toEqual({ severity: 'error' });
    expect(project.autoPair).toBe(true);
  });

  it('a nearer project file wins over one further up', () => {
    const root = tree({
      'noiselint.project.yaml': 'latentSpace: true\n',
      'stills/noiselint.project.json': '{ "latentSpace": false }',
      'stills/a.yaml': 'x: 1\n',
    });
    const project = loadProject(join(root, 'stills/a.yaml'));
    expect(project.file).toBe(join(root, 'stills/noiselint.project.json'));
    expect(project.latentSpace).toBe(false);
    expect(loadProject(join(root, 'other.yaml')).latentSpace).toBe(true);
  });

  it('accepts a folder as well as a file', () => {
    const root = tree({ 'noiselint.project.yaml': 'autoPair: false\n', 'sub/x.yaml': '' });
    expect(loadProject(join(root, 'sub')).autoPair).toBe(false);
  });

  it('falls back to the defaults (rooted at the filesystem root) when there is none', () => {
    const root = tree({ 'a/b.yaml': 'x: 1\n' });
    const project = loadProject(join(root, 'a/b.yaml'));
    // A project file somewhere above the temp folder would change this; the temp folder has none.
    expect(project.file).toBeNull();
    expect(project.root).toBe(parse(root).root);
    expect(project.autoPair).toBe(DEFAULT_PROJECT.autoPair);
    expect(project.rules).toEqual({});
  });

  it('caches per folder until the cache is cleared', () => {
    const root = tree({ 'noiselint.project.yaml': 'latentSpace: true\n', 'x.yaml': '' });
    expect(loadProject(join(root, 'x.yaml')).latentSpace).toBe(true);
    writeTree(root, { 'noiselint.project.yaml': 'latentSpace: false\n' });
    expect(loadProject(join(root, 'x.yaml')).latentSpace).toBe(true);
    clearProjectCache();
    expect(loadProject(join(root, 'x.yaml')).latentSpace).toBe(false);
  });

  it('an invalid project file throws one line naming the file and the field', () => {
    const root = tree({ 'noiselint.project.yaml': 'rules:\n  guidance-overexposure: loud\n', 'x.yaml': '' });
    let message = '';
    try {
      loadProject(join(root, 'x.yaml'));
    } catch (err) {
      expect(err).toBeInstanceOf(ProjectFileError);
      message = (err as Error).message;
    }
    expect(message).toContain(join(root, 'noiselint.project.yaml'));
    expect(message).toContain('rules.guidance-overexposure');
    expect(message).toContain('"loud"');
    expect(message).not.toContain('\n');
  });

  it('two project files in one folder is an error, not a silent choice', () => {
    const root = tree({ 'noiselint.project.yaml': '', 'noiselint.project.json': '{}', 'x.yaml': '' });
    expect(() => loadProject(join(root, 'x.yaml'))).toThrow(/keep one/);
  });
});

describe('project file validation', () => {
  it('an empty file means all defaults', () => {
    const p = parseProjectFile('', '/p/noiselint.project.yaml');
    expect(p.include).toEqual([]);
    expect(p.pairs).toEqual([]);
    expect(p.root).toBe('/p');
  });

  it('reads every documented field', () => {
    const p = parseProjectFile(
      [
        'include: ["configs/**"]',
        'exclude: [configs/archive/**]',
        'rules:',
        '  resolution-shift-hint: off',
        '  terminal-snr-leak: { severity: info, options: { warnSignal: 0.05 } }',
        'aliases:',
        '  trainSteps: [n_steps_train]',
        'latentSpace: false',
        'pairs:',
        '  - training: a/train.yaml',
        '    sampling: b/sample.yaml',
        'autoPair: false',
        'limits: { maxFileBytes: 1000, maxNesting: 20, maxListLength: 5000 }',
      ].join('\n'),
      '/p/noiselint.project.yaml',
    );
    expect(p.include).toEqual(['configs/**']);
    expect(p.exclude).toEqual(['configs/archive/**']);
    expect(p.rules['resolution-shift-hint']).toEqual({ severity: 'off' });
    expect(p.rules['terminal-snr-leak']).toEqual({ severity: 'info', options: { warnSignal: 0.05 } });
    expect(p.aliases.trainSteps).toEqual(['n_steps_train']);
    expect(p.latentSpace).toBe(false);
    expect(p.pairs).toEqual([{ training: 'a/train.yaml', sampling: 'b/sample.yaml' }]);
    expect(p.autoPair).toBe(false);
    expect(p.limits).toEqual({ maxFileBytes: 1000, maxNesting: 20, maxListLength: 5000 });
  });

  it('JSON project files use the same fields', () => {
    const p = resolveProjectData({ exclude: ['old/**'], autoPair: false }, '/q/noiselint.project.json');
    expect(p.exclude).toEqual(['old/**']);
    expect(p.autoPair).toBe(false);
    expect(errorOf('{ "autoPair": tru }', 'noiselint.project.json')).toMatch(/not valid JSON/);
  });

  it.each([
    ['rulez: {}', 'rulez: unknown field (did you mean "rules"?)'],
    ['include: 3', 'include: must be a list of glob patterns'],
    ['include: ["../outside/**"]', 'include[0]: "../outside/**" must stay inside'],
    ['exclude: ["/abs/**"]', 'exclude[0]: "/abs/**" must be relative'],
    ['rules: { some-rule: loud }', 'rules.some-rule: severity must be one of error, warning, info, hint, off'],
    ['rules: { some-rule: { severity: 2 } }', 'rules.some-rule.severity: must be one of'],
    ['rules: { some-rule: { level: error } }', 'rules.some-rule.level: unknown field'],
    ['rules: { some-rule: { options: { x: [1] } } }', 'rules.some-rule.options.x: must be a number, a string or true/false'],
    ['rules: { some-rule: { options: { x: .nan } } }', 'rules.some-rule.options.x: must be a finite number'],
    ['aliases: { trainStep: [steps] }', 'aliases.trainStep: unknown concept (did you mean "trainSteps"?)'],
    ['aliases: { trainSteps: [""] }', 'aliases.trainSteps[0]: must be a non-empty key spelling'],
    ['latentSpace: yes', 'latentSpace: must be true or false, not "yes"'],
    ['autoPair: 1', 'autoPair: must be true or false, not 1'],
    ['pairs: { training: a.yaml }', 'pairs: must be a list'],
    ['pairs: [{ training: a.yaml }]', 'pairs[0].sampling: must be a path'],
    ['pairs: [{ training: a.yaml, sampling: b.yaml, extra: 1 }]', 'pairs[0].extra: unknown field'],
    ['limits: { maxNesting: 0 }', 'limits.maxNesting: must be an integer in [1, 500], not 0'],
    ['limits: { maxFileBytes: 1.5 }', 'limits.maxFileBytes: must be an integer'],
    ['limits: { maxDepth: 3 }', 'limits.maxDepth: unknown limit'],
    ['- just\n- a list', 'must be a mapping of fields'],
    ['rules: [\n', 'not valid YAML at line'],
    ['a: 1\na: 2', 'not valid YAML at line 2'],
  ])('%j -> "%s"', (text, expected) => {
    const message = errorOf(text);
    expect(message).not.toBeNull();
    expect(message).toContain(expected);
    expect(message).toMatch(/^\/p\/noiselint\.project\.yaml: /);
    expect(message).not.toContain('\n');
  });

  it('with the rule catalogue, rule ids, option names and option types are checked', () => {
    expect(errorOf('rules: { terminal-snr-leek: off }', undefined, [leakMeta])).toContain(
      'rules.terminal-snr-leek: unknown rule (did you mean "terminal-snr-leak"?)',
    );
    expect(errorOf('rules: { terminal-snr-leak: { options: { warnSignals: 0.1 } } }', undefined, [leakMeta])).toContain(
      'rules.terminal-snr-leak.options.warnSignals: unknown option (did you mean "warnSignal"?)',
    );
    expect(errorOf('rules: { terminal-snr-leak: { options: { warnSignal: "high" } } }', undefined, [leakMeta])).toContain(
      'rules.terminal-snr-leak.options.warnSignal: must be a number, not "high"',
    );
    expect(errorOf('rules: { terminal-snr-leak: { severity: error, options: { warnSignal: 0.1 } } }', undefined, [leakMeta])).toBeNull();
  });
});
