import { afterEach, describe, expect, it } from 'vitest';
import { ruleDocs } from '../../server/src/rules/docs';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { createRequire } from 'node:module';
import { dirname } from 'node:path';
import { REPO_ROOT } from '../lsp/buildServer';
import Ajv2020, { type ValidateFunction } from 'ajv/dist/2020';
import addFormats from 'ajv-formats';
import { ALL_RULE_METAS } from '../../server/src/rules';
import { removeTree } from '../workspace/helpers';
import { CLEAN, LEAKY_V, ZERO_SNR_EPSILON, runCli, tempTree } from './check-helpers';
import { FINGERPRINT_KEY, toSarif } from '../../server/src/cli/output/sarif';
import { HOMEPAGE, VERSION } from '../../server/src/base/version';

const roots: string[] = [];
function tree(files: Record<string, string | Uint8Array>): string {
  const root = tempTree(files);
  roots.push(root);
  return root;
}
afterEach(() => {
  while (roots.length) removeTree(roots.pop()!);
});

/**
 * The SARIF 2.1.0 JSON schema as the SARIF SDK ships it in its npm package
 * (@microsoft/sarif-multitool-<platform>, file sarif-2.1.0.json: the OASIS SARIF 2.1.0 schema with
 * its errata, written for JSON Schema 2020-12). Formats (uri, date-time, uuid) come from ajv-formats.
 */
function officialSchemaPath(): string {
  const require = createRequire(import.meta.url);
  const wrapper = dirname(require.resolve('@microsoft/sarif-multitool/package.json'));
  const platformPackage = `@microsoft/sarif-multitool-${process.platform === 'win32' ? 'win32' : process.platform === 'darwin' ? 'darwin' : 'linux'}`;
  return require.resolve(`${platformPackage}/sarif-2.1.0.json`, { paths: [wrapper] });
}

let compiled: ValidateFunction | undefined;
function validator(): ValidateFunction {
  if (!compiled) {
    const schema = JSON.parse(readFileSync(officialSchemaPath(), 'utf8'));
    expect(schema.title).toMatch(/SARIF\) Version 2\.1\.0 JSON Schema/);
    const ajv = new Ajv2020({ allErrors: true, strict: false });
    addFormats(ajv);
    compiled = ajv.compile(schema);
  }
  return compiled;
}

function expectValid(log: unknown): void {
  const validate = validator();
  const ok = validate(log);
  expect(validate.errors ?? []).toEqual([]);
  expect(ok).toBe(true);
}

describe('check --format sarif', () => {
  it('validates against the official SARIF 2.1.0 schema and maps findings to 1-based regions', async () => {
    const root = tree({ 'runs/eps.yaml': ZERO_SNR_EPSILON, 'runs/leaky.yaml': LEAKY_V });
    const r = await runCli(['check', '--format', 'sarif'], root);
    expect(r.code).toBe(1);
    const log = JSON.parse(r.stdout);
    expectValid(log);

    const run = log.runs[0];
    expect(run.tool.driver.name).toBe('noiselint');
    expect(run.columnKind).toBe('utf16CodeUnits');
    expect(run.originalUriBaseIds['%SRCROOT%'].uri).toBe(`file://${root}/`);

    const eps = run.results.find((x: { ruleId: string }) => x.ruleId === 'epsilon-at-zero-snr');
    expect(eps.level).toBe('error');
    const loc = eps.locations[0].physicalLocation;
    expect(loc.artifactLocation).toEqual({ uri: 'runs/eps.yaml', uriBaseId: '%SRCROOT%' });
    // Line 7 (1-based) holds `prediction_type: epsilon`; JSON output calls it line 6.
    expect(loc.region.startLine).toBe(7);
    expect(run.tool.driver.rules[eps.ruleIndex].id).toBe('epsilon-at-zero-snr');
    expect(eps.fixes[0].artifactChanges[0].artifactLocation.uri).toBe('runs/eps.yaml');
    expect(eps.fixes[0].artifactChanges[0].replacements[0].insertedContent.text).toMatch(/v_prediction/);
    // What the fix means for a trained checkpoint, in the project's own words.
    expect(eps.fixes[0].properties).toEqual({ effect: 'needs-retraining', touchesComment: false, preferred: true });

    const leak = run.results.find((x: { ruleId: string }) => x.ruleId === 'terminal-snr-leak');
    expect(leak.level).toBe('warning');
  });

  it('lists every rule with its documentation and default level', async () => {
    const root = tree({ 'a.yaml': LEAKY_V });
    const log = JSON.parse((await runCli(['check', '--format', 'sarif'], root)).stdout);
    const rules = log.runs[0].tool.driver.rules;
    expect(rules.map((d: { id: string }) => d.id)).toEqual(ALL_RULE_METAS.map((m) => m.id));
    const level = { error: 'error', warning: 'warning', info: 'note', hint: 'note' } as const;
    for (const meta of ALL_RULE_METAS) {
      const d = rules.find((x: { id: string }) => x.id === meta.id);
      expect(d.shortDescription.text).toBe(meta.summary);
      expect(d.defaultConfiguration.level).toBe(level[meta.defaultSeverity]);
      // No https docs base configured: no link (never a file:// path of the machine that ran the check).
      expect(d.helpUri).toBeUndefined();
      // The same text as the rule's page, option list included.
      expect(d.help.markdown).toBe(ruleDocs(meta));
      expect(d.help.text).toContain(meta.summary);
      expect(d.help.text).not.toMatch(/^#/m);
      expect(d.fullDescription.text.length).toBeGreaterThan(0);
      expect(d.properties).toEqual({
        repairEffects: meta.repair ? [...meta.repair.effects] : [],
        repairForEveryFinding: meta.repair?.everyFinding ?? false,
        defaultSeverity: meta.defaultSeverity,
      });
    }
    const eps = rules.find((x: { id: string }) => x.id === 'epsilon-at-zero-snr');
    expect(eps.properties.repairEffects).toEqual(['needs-retraining']);
    expect(eps.help.markdown).toContain('## Effect on a trained checkpoint');
    expect(eps.fullDescription.text).not.toMatch(/^#/);
  });

  it('a clean run is a valid log with no results', async () => {
    const root = tree({ 'clean.yaml': CLEAN });
    const r = await runCli(['check', '--format', 'sarif'], root);
    expect(r.code).toBe(0);
    const log = JSON.parse(r.stdout);
    expectValid(log);
    expect(log.runs[0].results).toEqual([]);
    expect(log.runs[0].invocations[0].executionSuccessful).toBe(true);
  });

  it('file names with spaces are percent-encoded URIs', async () => {
    const root = tree({ 'night runs/leaky #2.yaml': LEAKY_V });
    const log = JSON.parse((await runCli(['check', '--format', 'sarif'], root)).stdout);
    expect(log.runs[0].results[0].locations[0].physicalLocation.artifactLocation.uri).toBe('night%20runs/leaky%20%232.yaml');
  });

  it("names the tool's home and version, as package.json does", async () => {
    const root = tree({ 'a.yaml': LEAKY_V });
    const log = JSON.parse((await runCli(['check', '--format', 'sarif'], root)).stdout);
    const pkg = JSON.parse(readFileSync(join(REPO_ROOT, 'package.json'), 'utf8'));
    expect(log.runs[0].tool.driver.informationUri).toBe(HOMEPAGE);
    expect(HOMEPAGE).toBe(pkg.homepage);
    expect(log.runs[0].tool.driver.version).toBe(VERSION);
    expect(VERSION).toBe(pkg.version);
  });

  it('links rule pages only under an https base', () => {
    const report = { cwd: '/w', files: [], skipped: [], otherTexts: new Map(), notices: [] };
    const rules = (docsBase?: string) =>
      (
        toSarif(report, { version: VERSION, rules: ALL_RULE_METAS, docsBase }).runs as {
          tool: { driver: { rules: { id: string; helpUri?: string }[] } };
        }[]
      )[0]!.tool.driver.rules;
    const linked = rules('https://docs.lanternfish.example/noiselint/rules');
    expect(linked.find((d) => d.id === 'terminal-snr-leak')?.helpUri).toBe('https://docs.lanternfish.example/noiselint/rules/terminal-snr-leak.md');
    for (const base of [undefined, '', 'http://docs.lanternfish.example/rules', 'file:///work/docs/rules', 'docs/rules']) {
      expect(
        rules(base).every((d) => d.helpUri === undefined),
        String(base),
      ).toBe(true);
    }
  });

  it('fingerprints stay the same across runs and line moves, and tell findings apart', async () => {
    const fingerprints = async (text: string) => {
      const root = tree({ 'runs/eps.yaml': text });
      const log = JSON.parse((await runCli(['check', '--format', 'sarif'], root)).stdout);
      expectValid(log);
      return new Map<string, string>(
        log.runs[0].results.map((r: { ruleId: string; partialFingerprints: Record<string, string> }) => [
          r.ruleId,
          r.partialFingerprints[FINGERPRINT_KEY],
        ]),
      );
    };
    const first = await fingerprints(ZERO_SNR_EPSILON);
    expect(first.size).toBeGreaterThan(0);
    for (const hash of first.values()) expect(hash).toMatch(/^[0-9a-f]{32}$/);
    expect(new Set(first.values()).size).toBe(first.size);
    // A second run of the same file.
    expect(await fingerprints(ZERO_SNR_EPSILON)).toEqual(first);
    // The same findings three lines further down, under a comment and an unrelated section.
    const moved = `# Lanternfish Pictures: night storyboard run\nlogging:\n  every: 50\n${ZERO_SNR_EPSILON}`;
    expect(await fingerprints(moved)).toEqual(first);
    // Changing the flagged value is a different finding.
    const edited = await fingerprints(ZERO_SNR_EPSILON.replace('prediction_type: epsilon', 'prediction_type: eps'));
    expect(edited.get('epsilon-at-zero-snr')).toBeDefined();
    expect(edited.get('epsilon-at-zero-snr')).not.toBe(first.get('epsilon-at-zero-snr'));
  });
});
