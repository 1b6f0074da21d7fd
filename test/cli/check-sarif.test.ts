import { afterEach, describe, expect, it } from 'vitest';
import Ajv from 'ajv';
import { ruleDocs } from '../../server/src/rules/docs';
import { ALL_RULE_METAS } from '../../server/src/rules';
import { removeTree } from '../workspace/helpers';
import { LEAKY_V, ZERO_SNR_EPSILON, runCli, tempTree } from './check-helpers';

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
 * A hand-written subset of the SARIF 2.1.0 schema (OASIS, sarif-schema-2.1.0.json): the parts a
 * code-scanning service reads. Written from the specification's object descriptions
 * (sections 3.13 sarifLog, 3.14 run, 3.19 toolComponent, 3.49 reportingDescriptor, 3.27 result,
 * 3.28 location, 3.29 physicalLocation, 3.30 region, 3.55 fix, 3.56 artifactChange,
 * 3.57 replacement), recalled from memory; not downloaded.
 */
const message = { type: 'object', required: ['text'], properties: { text: { type: 'string', minLength: 1 } } };
const region = {
  type: 'object',
  required: ['startLine'],
  properties: {
    startLine: { type: 'integer', minimum: 1 },
    startColumn: { type: 'integer', minimum: 1 },
    endLine: { type: 'integer', minimum: 1 },
    endColumn: { type: 'integer', minimum: 1 },
  },
};
const artifactLocation = {
  type: 'object',
  required: ['uri'],
  properties: { uri: { type: 'string', minLength: 1 }, uriBaseId: { type: 'string' } },
};
const physicalLocation = {
  type: 'object',
  required: ['artifactLocation', 'region'],
  properties: { artifactLocation, region },
};
const location = {
  type: 'object',
  required: ['physicalLocation'],
  properties: { id: { type: 'integer', minimum: -1 }, physicalLocation, message },
};
const multiformat = { type: 'object', required: ['text'], properties: { text: { type: 'string' }, markdown: { type: 'string' } } };
const reportingDescriptor = {
  type: 'object',
  required: ['id'],
  properties: {
    id: { type: 'string', minLength: 1 },
    shortDescription: multiformat,
    fullDescription: multiformat,
    help: multiformat,
    helpUri: { type: 'string', format: 'uri' },
    defaultConfiguration: {
      type: 'object',
      properties: { level: { enum: ['none', 'note', 'warning', 'error'] }, enabled: { type: 'boolean' } },
    },
  },
};
const fix = {
  type: 'object',
  required: ['artifactChanges'],
  properties: {
    description: message,
    artifactChanges: {
      type: 'array',
      minItems: 1,
      items: {
        type: 'object',
        required: ['artifactLocation', 'replacements'],
        properties: {
          artifactLocation,
          replacements: {
            type: 'array',
            minItems: 1,
            items: {
              type: 'object',
              required: ['deletedRegion'],
              properties: { deletedRegion: region, insertedContent: { type: 'object', properties: { text: { type: 'string' } } } },
            },
          },
        },
      },
    },
  },
};
const result = {
  type: 'object',
  required: ['message', 'ruleId', 'level', 'locations'],
  properties: {
    ruleId: { type: 'string' },
    ruleIndex: { type: 'integer', minimum: 0 },
    level: { enum: ['none', 'note', 'warning', 'error'] },
    message,
    locations: { type: 'array', items: location },
    relatedLocations: { type: 'array', items: location },
    fixes: { type: 'array', items: fix },
  },
};
const sarifSubset = {
  type: 'object',
  required: ['version', 'runs'],
  properties: {
    $schema: { type: 'string', format: 'uri' },
    version: { const: '2.1.0' },
    runs: {
      type: 'array',
      minItems: 1,
      items: {
        type: 'object',
        required: ['tool'],
        properties: {
          tool: {
            type: 'object',
            required: ['driver'],
            properties: {
              driver: {
                type: 'object',
                required: ['name'],
                properties: { name: { type: 'string' }, version: { type: 'string' }, rules: { type: 'array', items: reportingDescriptor } },
              },
            },
          },
          originalUriBaseIds: { type: 'object', additionalProperties: { type: 'object', properties: { uri: { type: 'string', format: 'uri' } } } },
          columnKind: { enum: ['utf16CodeUnits', 'unicodeCodePoints'] },
          results: { type: 'array', items: result },
        },
      },
    },
  },
};

/** ajv's "uri" format without the ajv-formats package: an absolute URI. */
function validator() {
  const ajv = new Ajv({ allErrors: true, strict: true });
  ajv.addFormat('uri', (s: string) => /^[a-z][a-z0-9+.-]*:/i.test(s) && URL.canParse(s));
  return ajv.compile(sarifSubset);
}

describe('check --format sarif', () => {
  it('validates against the SARIF 2.1.0 subset and maps findings to 1-based regions', async () => {
    const root = tree({ 'runs/eps.yaml': ZERO_SNR_EPSILON, 'runs/leaky.yaml': LEAKY_V });
    const r = await runCli(['check', '--format', 'sarif'], root);
    expect(r.code).toBe(1);
    const log = JSON.parse(r.stdout);
    const validate = validator();
    const ok = validate(log);
    expect(validate.errors ?? []).toEqual([]);
    expect(ok).toBe(true);

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
      expect(d.helpUri.endsWith(`docs/rules/${meta.id}.md`)).toBe(true);
      // The same text as the rule's page, option list included.
      expect(d.help.markdown).toBe(ruleDocs(meta));
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
    const root = tree({ 'notes.yaml': 'title: storyboard notes\n' });
    const r = await runCli(['check', '--format', 'sarif'], root);
    expect(r.code).toBe(0);
    const log = JSON.parse(r.stdout);
    expect(validator()(log)).toBe(true);
    expect(log.runs[0].results).toEqual([]);
    expect(log.runs[0].invocations[0].executionSuccessful).toBe(true);
  });

  it('file names with spaces are percent-encoded URIs', async () => {
    const root = tree({ 'night runs/leaky #2.yaml': LEAKY_V });
    const log = JSON.parse((await runCli(['check', '--format', 'sarif'], root)).stdout);
    expect(log.runs[0].results[0].locations[0].physicalLocation.artifactLocation.uri).toBe('night%20runs/leaky%20%232.yaml');
  });
});
