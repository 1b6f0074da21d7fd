/**
 * Documentation pages generated from the rules' metadata (docs/rules/*.md). The pages are
 * written by scripts/gen-rule-docs.mjs and compared with this output by a test, so they cannot
 * drift from the code.
 */
import { ALL_RULE_METAS, ENGINE_RULE_METAS } from './index';
import { fmt } from './format';
import type { RuleMeta } from './types';

const FIX_TEXT: Record<RuleMeta['fixable'], string> = {
  always: 'yes',
  sometimes: 'sometimes',
  never: 'no',
};

function sourceFile(meta: RuleMeta): string {
  return `server/src/rules/${meta.id}.ts`;
}

function optionText(value: number | string | boolean): string {
  return typeof value === 'string' ? JSON.stringify(value) : typeof value === 'number' ? fmt(value) : String(value);
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
    `- Fix: ${FIX_TEXT[meta.fixable]}`,
    options.length
      ? `- Options: ${options.map(([name, o]) => `\`${name}\` (default ${optionText(o.default)})`).join(', ')}`
      : '- Options: none',
    '',
    meta.docs.trim(),
    '',
  ];
  return lines.join('\n');
}

export function renderRuleIndex(metas: readonly RuleMeta[]): string {
  const engineIds = new Set(ENGINE_RULE_METAS.map((m) => m.id));
  const row = (m: RuleMeta) => `| [${m.id}](${m.id}.md) | ${m.defaultSeverity} | ${FIX_TEXT[m.fixable]} | ${m.summary} |`;
  return [
    '<!-- Generated from server/src/rules by `npm run docs`. Do not edit by hand. -->',
    '',
    '# Rules',
    '',
    'Every rule can be turned off or given another severity in the project file',
    '(`rules: { <id>: { severity: off | error | warning | info | hint, options: {...} } }`).',
    'Thresholds are project defaults, not published values, and are rule options.',
    'A finding can be silenced with a `noiselint: allow <id>` comment.',
    '',
    '| rule | default | fix | what it finds |',
    '| --- | --- | --- | --- |',
    ...metas.filter((m) => !engineIds.has(m.id)).map(row),
    '',
    'Reported by the engine itself:',
    '',
    '| id | default | fix | what it finds |',
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
