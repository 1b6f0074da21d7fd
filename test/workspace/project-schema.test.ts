/**
 * The project file's JSON Schema: built from the same tables as the loader, shipped in the npm
 * package (schemas/) and the VS Code extension (client/schemas/, registered for completion and
 * validation), and agreeing with the loader on valid and invalid project files.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import Ajv from 'ajv';
import { parse as parseYaml } from 'yaml';
import { describe, expect, it } from 'vitest';
import { FAMILY_IDS } from '../../server/src/consumers/profiles';
import { parseProjectFile, PROJECT_FILE_NAMES } from '../../server/src/workspace/projectFile';
import { PROJECT_SCHEMA_FILE, projectFileSchemaText } from '../../server/src/workspace/projectSchema';
import { REPO_ROOT, ensureServerBuilt } from '../lsp/buildServer';

function validator() {
  const ajv = new Ajv({ allErrors: true, strict: true, allowUnionTypes: true });
  return ajv.compile(JSON.parse(projectFileSchemaText()));
}

const VALID: Record<string, string> = {
  'the demo workspace': readFileSync(join(REPO_ROOT, 'examples/noiselint.project.yaml'), 'utf8'),
  'the documented example': /```yaml\n(# noiselint\.project\.yaml[\s\S]*?)```/.exec(
    readFileSync(join(REPO_ROOT, 'docs/project-file.md'), 'utf8'),
  )![1]!,
  'an empty file': '',
  'a single glob as a string': 'include: "configs/**"\n',
  'rule options': 'rules:\n  terminal-snr-leak:\n    severity: error\n    options: { warnSignal: 0.02 }\n',
  'a consumer entry': `consumers:\n  - files: ["launch/**"]\n    consumer: ${FAMILY_IDS[0]}\n`,
};

const INVALID: Record<string, string> = {
  'an unknown field': 'rulez: {}\n',
  'an unknown rule': 'rules:\n  terminal-snr-leek: off\n',
  'an unknown severity': 'rules:\n  terminal-snr-leak: loud\n',
  'an option of the wrong type': 'rules:\n  terminal-snr-leak:\n    options: { warnSignal: "high" }\n',
  'an unknown option': 'rules:\n  terminal-snr-leak:\n    options: { warnSignals: 0.02 }\n',
  'an unknown concept': 'aliases:\n  trainStep: [lf_steps]\n',
  'a limit out of range': 'limits: { maxNesting: 0 }\n',
  'a pair without its sampling side': 'pairs:\n  - training: a.yaml\n',
  'a flag that is not a boolean': 'autoPair: "yes"\n',
  'an absolute glob': 'include: ["/etc/**"]\n',
  'a consumer entry without files': `consumers:\n  - consumer: ${FAMILY_IDS[0]}\n`,
  'an unknown consumer family': 'consumers:\n  - files: ["launch/**"]\n    consumer: no-such-family\n',
};

describe('project file schema', () => {
  it('the build wrote it for the package and the extension, and the extension registers it', () => {
    ensureServerBuilt();
    const text = projectFileSchemaText();
    expect(readFileSync(join(REPO_ROOT, 'schemas', PROJECT_SCHEMA_FILE), 'utf8')).toBe(text);
    expect(readFileSync(join(REPO_ROOT, 'client/schemas', PROJECT_SCHEMA_FILE), 'utf8')).toBe(text);
    const client = JSON.parse(readFileSync(join(REPO_ROOT, 'client/package.json'), 'utf8'));
    const url = `./schemas/${PROJECT_SCHEMA_FILE}`;
    expect(client.contributes.jsonValidation).toEqual([{ fileMatch: 'noiselint.project.json', url }]);
    expect(client.contributes.yamlValidation).toEqual([{ fileMatch: ['noiselint.project.yaml', 'noiselint.project.yml'], url }]);
    // Every project-file name is registered, and the .vsix keeps the schema.
    const registered = [client.contributes.jsonValidation[0].fileMatch, ...client.contributes.yamlValidation[0].fileMatch];
    expect(registered.sort()).toEqual([...PROJECT_FILE_NAMES].sort());
    expect(readFileSync(join(REPO_ROOT, 'client/.vscodeignore'), 'utf8')).toMatch(/^!schemas\/\*\.json$/m);
    const pkg = JSON.parse(readFileSync(join(REPO_ROOT, 'package.json'), 'utf8'));
    expect(pkg.files).toContain('schemas/*.json');
  });

  for (const [label, text] of Object.entries(VALID)) {
    it(`accepts ${label}, as the loader does`, () => {
      expect(() => parseProjectFile(text, '/lanternfish/noiselint.project.yaml')).not.toThrow();
      const validate = validator();
      const ok = validate(parseYaml(text) ?? null);
      expect(validate.errors ?? []).toEqual([]);
      expect(ok).toBe(true);
    });
  }

  for (const [label, text] of Object.entries(INVALID)) {
    it(`rejects ${label}, as the loader does`, () => {
      expect(() => parseProjectFile(text, '/lanternfish/noiselint.project.yaml')).toThrow();
      expect(validator()(parseYaml(text))).toBe(false);
    });
  }
});
