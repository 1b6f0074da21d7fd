/** The extension's per-rule settings are written from the rule registry (`npm run docs`). */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ALL_RULE_METAS } from '../../server/src/rules';
import { ruleSettingsSchema } from '../../server/src/rules/docs';

const manifest = JSON.parse(readFileSync(join(__dirname, '../../client/package.json'), 'utf8'));
const settings = manifest.contributes.configuration.properties;

describe('client/package.json rule settings', () => {
  it('match the registry (run `npm run docs` after adding a rule or an option)', () => {
    const schema = ruleSettingsSchema();
    expect(settings['noiselint.rules'].properties).toEqual(schema.severities);
    expect(settings['noiselint.thresholds'].properties).toEqual(schema.thresholds);
  });

  it('offer every rule, and every option with its default and type', () => {
    expect(Object.keys(settings['noiselint.rules'].properties).sort()).toEqual(ALL_RULE_METAS.map((m) => m.id).sort());
    for (const meta of ALL_RULE_METAS) {
      for (const [name, option] of Object.entries(meta.options)) {
        const entry = settings['noiselint.thresholds'].properties[meta.id].properties[name];
        expect(entry.default, `${meta.id}.${name}`).toBe(option.default);
        expect(entry.type).toBe(typeof option.default);
      }
    }
  });
});
