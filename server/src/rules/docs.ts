/**
 * Documentation pages generated from the rules' metadata (docs/rules/*.md). The pages are
 * written by scripts/gen-rule-docs.mjs and compared with this output by a test, so they cannot
 * drift from the code.
 */
import { ALL_RULE_METAS, ENGINE_RULE_METAS } from './index';
import { fmt } from './format';
import type { FixEffect } from '../base/findings';
import type { RuleMeta } from './types';

/** The headings of every rule's documentation, in order. */
export const RULE_DOC_HEADINGS = [
  'What triggers it',
  'What the run loses',
  'A flagged config',
  'The repaired config',
  'Effect on a trained checkpoint',
  'Numbers you can tune',
  'Published sources',
] as const;

const EFFECT_TEXT: Record<FixEffect, string> = {
  'sampling-only': 'sampling only',
  'needs-retraining': 'needs retraining',
};

/** What a rule's repairs do, in a few words: "sampling only", "needs retraining, some findings", "none". */
export function repairLabel(meta: RuleMeta): string {
  if (!meta.repair || meta.repair.effects.length === 0) return 'none';
  const effects = meta.repair.effects.map((e) => EFFECT_TEXT[e]).join(' or ');
  return meta.repair.everyFinding ? effects : `${effects}, some findings`;
}

function sourceFile(meta: RuleMeta): string {
  return `server/src/rules/${meta.id}.ts`;
}

function optionText(value: number | string | boolean): string {
  return typeof value === 'string' ? JSON.stringify(value) : typeof value === 'number' ? fmt(value) : String(value);
}

const OPTIONS_HEADING = '## Numbers you can tune';

/**
 * A rule's documentation with its option list written from the metadata, so each default is
 * stated once (in `meta.options`). The rule's own text under "Numbers you can tune" follows the
 * list as a note.
 */
export function ruleDocs(meta: RuleMeta): string {
  const docs = meta.docs.trim();
  const at = docs.indexOf(OPTIONS_HEADING);
  if (at < 0) return docs;
  const bodyStart = at + OPTIONS_HEADING.length;
  const next = docs.indexOf('\n## ', bodyStart);
  // "None." is what the generated list says for a rule without options; a note never repeats it.
  const note = docs
    .slice(bodyStart, next < 0 ? docs.length : next)
    .trim()
    .replace(/^None\.\s*/, '');
  const options = Object.entries(meta.options);
  const list = options.length ? options.map(([name, o]) => `- \`${name}\` (default ${optionText(o.default)}): ${o.description}`).join('\n') : 'None.';
  const section = [OPTIONS_HEADING, '', list, ...(note ? ['', note] : [])].join('\n');
  return `${docs.slice(0, at)}${section}${next < 0 ? '' : `\n${docs.slice(next)}`}`;
}

export function renderRulePage(meta: RuleMeta): string {
  const options = Object.entries(meta.options);
  const lines = [
    `<!-- Generated from ${sourceFile(meta)} by \`npm run docs\`. Do not edit by hand. -->`,
    '',
    `# ${meta.id}`,
    '',
    meta.summary,
    '',
    `- Default severity: ${meta.defaultSeverity}`,
    `- Repair: ${repairLabel(meta)}`,
    options.length ? `- Options: ${options.map(([name, o]) => `\`${name}\` (default ${optionText(o.default)})`).join(', ')}` : '- Options: none',
    '',
    ruleDocs(meta),
    '',
  ];
  return lines.join('\n');
}

export function renderRuleIndex(metas: readonly RuleMeta[]): string {
  const engineIds = new Set(ENGINE_RULE_METAS.map((m) => m.id));
  const row = (m: RuleMeta) => `| [${m.id}](${m.id}.md) | ${m.defaultSeverity} | ${repairLabel(m)} | ${m.summary} |`;
  return [
    '<!-- Generated from server/src/rules by `npm run docs`. Do not edit by hand. -->',
    '',
    '# Rules',
    '',
    'Every rule can be turned off or given another severity in the project file',
    '(`rules: { <id>: { severity: off | error | warning | info | hint, options: {...} } }`).',
    'Thresholds are project defaults, not published values, and are rule options.',
    'A choice made on purpose is marked with a `# noiselint: deliberate <id> because <reason>` comment',
    '(on the line before the field or at its end; `deliberate throughout <id>` covers the whole file).',
    '',
    '| rule | default | repair | what it finds |',
    '| --- | --- | --- | --- |',
    ...metas.filter((m) => !engineIds.has(m.id)).map(row),
    '',
    'Reported by the engine itself:',
    '',
    '| id | default | repair | what it finds |',
    '| --- | --- | --- | --- |',
    ...metas.filter((m) => engineIds.has(m.id)).map(row),
    '',
  ].join('\n');
}

/** File name (relative to docs/rules/) -> content. */
export function renderRuleDocPages(): Record<string, string> {
  const pages: Record<string, string> = { 'README.md': renderRuleIndex(ALL_RULE_METAS) };
  for (const meta of ALL_RULE_METAS) pages[`${meta.id}.md`] = renderRulePage(meta);
  return pages;
}

const SEVERITY_CHOICES = ['error', 'warning', 'info', 'hint', 'off'] as const;
const SEVERITY_DESCRIPTIONS = [
  'Report as an error',
  'Report as a warning',
  'Report as information',
  'Show as a hint only (dotted underline)',
  'Do not run this rule',
];

/**
 * The per-rule parts of the editor settings (`noiselint.rules` and `noiselint.thresholds` in
 * client/package.json), written from the registry by `npm run docs` so that a new rule or option
 * cannot be left out. A test compares the manifest with this.
 */
export function ruleSettingsSchema(): { severities: Record<string, unknown>; thresholds: Record<string, unknown> } {
  const severities: Record<string, unknown> = {};
  const thresholds: Record<string, unknown> = {};
  for (const meta of ALL_RULE_METAS) {
    severities[meta.id] = {
      type: 'string',
      enum: [...SEVERITY_CHOICES],
      enumDescriptions: SEVERITY_DESCRIPTIONS,
      markdownDescription: `${meta.summary} Default: ${meta.defaultSeverity}.`,
    };
    const options = Object.entries(meta.options);
    if (options.length === 0) continue;
    const properties: Record<string, unknown> = {};
    for (const [name, option] of options) {
      properties[name] = { type: typeof option.default, default: option.default, description: option.description };
    }
    thresholds[meta.id] = { type: 'object', additionalProperties: false, properties };
  }
  return { severities, thresholds };
}
