/**
 * Docs are tests: every rule's documentation has the fixed headings, every flagged config yields
 * exactly that rule's finding (once) and every repaired config none; the generated pages in
 * docs/rules are up to date.
 */
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { readFile } from '../../server/src/engine/api';
import { ALL_RULE_METAS, RULES } from '../../server/src/rules';
import { RULE_DOC_HEADINGS, renderRuleDocPages, ruleDocs } from '../../server/src/rules/docs';
import type { RuleMeta } from '../../server/src/rules/types';
import { runOnly } from './harness';

const HEADINGS = [...RULE_DOC_HEADINGS];

it("the headings are the project's own set", () => {
  expect(HEADINGS).toEqual([
    'What triggers it',
    'What the run loses',
    'A flagged config',
    'The repaired config',
    'Effect on a trained checkpoint',
    'Numbers you can tune',
    'Published sources',
  ]);
});

/** The text under each `## ` heading. */
function sections(docs: string): Map<string, string> {
  const out = new Map<string, string>();
  const parts = docs.split(/^## /m).slice(1);
  for (const part of parts) {
    const nl = part.indexOf('\n');
    out.set(part.slice(0, nl).trim(), part.slice(nl + 1));
  }
  return out;
}

/** Fenced blocks with their info string. */
function codeBlocks(section: string): { info: string; body: string }[] {
  const out: { info: string; body: string }[] = [];
  const re = /^```([^\n]*)\n([\s\S]*?)^```$/gm;
  for (let m = re.exec(section); m; m = re.exec(section)) out.push({ info: m[1]!.trim(), body: m[2]! });
  return out;
}

function partnersOf(meta: RuleMeta) {
  const partner = codeBlocks(meta.docs).find((b) => b.info === 'yaml partner');
  if (!partner) return undefined;
  const read = readFile(partner.body, { path: 'train.yaml', format: 'yaml' });
  return read.documents.map((d) => ({ path: 'train.yaml', setup: d.setup, analysis: d.analysis }));
}

describe.each(ALL_RULE_METAS.map((m) => [m.id, m] as const))('docs of %s', (id, meta) => {
  const byHeading = sections(ruleDocs(meta));

  it('has the fixed headings, in order, and nothing else', () => {
    expect([...byHeading.keys()]).toEqual(HEADINGS);
    for (const h of HEADINGS) expect(byHeading.get(h)!.trim().length, h).toBeGreaterThan(0);
  });

  it('states each default once, in the metadata: the rule text never repeats one', () => {
    expect(sections(meta.docs).get('Numbers you can tune') ?? '').not.toMatch(/\(default /);
    // The rule's own note under the heading survives next to the generated list.
    const own = (sections(meta.docs).get('Numbers you can tune') ?? '').trim();
    if (own) expect(byHeading.get('Numbers you can tune')!).toContain(own);
  });

  it('names every option with its default, and cites a source with a year', () => {
    const options = byHeading.get('Numbers you can tune')!;
    for (const [name, option] of Object.entries(meta.options)) {
      const m = new RegExp(`\`${name}\` \\(default ([^)]+)\\)`).exec(options);
      expect(m, `option ${name} with its default`).not.toBeNull();
      const written = m![1];
      if (typeof option.default === 'number') expect(Number(written), `default of ${name}`).toBe(option.default);
      else expect(written, `default of ${name}`).toBe(String(option.default));
    }
    if (Object.keys(meta.options).length === 0) expect(options).toMatch(/^None\b/m);
    expect(byHeading.get('Published sources')!).toMatch(/\b(19|20)\d\d\b/);
  });

  it('has a yaml flagged config that yields exactly one finding of this rule', () => {
    const blocks = codeBlocks(byHeading.get('A flagged config')!).filter((b) => b.info === 'yaml');
    expect(blocks.length).toBeGreaterThan(0);
    for (const block of blocks) {
      const { findings, ruleErrors } = runOnly(id, block.body, { partners: partnersOf(meta), pairRole: partnersOf(meta) ? 'sampling' : undefined });
      expect(ruleErrors).toEqual([]);
      expect(findings.map((f) => `${f.rule}: ${f.message}`)).toHaveLength(1);
      expect(findings[0]!.rule).toBe(id);
      expect(block.body).toContain('Lanternfish Pictures');
    }
  });

  it('has yaml repaired configs that yield none of this rule', () => {
    const blocks = codeBlocks(byHeading.get('The repaired config')!).filter((b) => b.info === 'yaml');
    expect(blocks.length).toBeGreaterThan(0);
    for (const block of blocks) {
      const { findings, ruleErrors } = runOnly(id, block.body, { partners: partnersOf(meta), pairRole: partnersOf(meta) ? 'sampling' : undefined });
      expect(ruleErrors).toEqual([]);
      expect(findings.map((f) => `${f.rule}: ${f.message}`)).toEqual([]);
    }
  });

  it('says what its repair means for a trained checkpoint, in step with its metadata', () => {
    const effect = byHeading.get('Effect on a trained checkpoint')!.trim();
    const effects = meta.repair?.effects ?? [];
    if (effects.length === 0) expect(effect).toMatch(/^No repair offered\b/);
    else if (effects.includes('needs-retraining')) expect(effect).toMatch(/^Needs fine-tuning or retraining\./);
    else expect(effect).toMatch(/^Sampling only\b/);
  });
});

describe('generated pages', () => {
  const dir = join(__dirname, '..', '..', 'docs', 'rules');

  it('docs/rules matches the rules (run `npm run docs` after changing a rule)', () => {
    const pages = renderRuleDocPages();
    for (const [name, content] of Object.entries(pages)) {
      const path = join(dir, name);
      expect(existsSync(path), `docs/rules/${name} exists`).toBe(true);
      expect(readFileSync(path, 'utf8'), `docs/rules/${name}`).toBe(content);
    }
    const onDisk = readdirSync(dir).filter((f) => f.endsWith('.md'));
    expect(onDisk.sort()).toEqual(Object.keys(pages).sort());
  });

  it('lists every rule in the index', () => {
    const index = renderRuleDocPages()['README.md'];
    for (const rule of RULES) expect(index).toContain(`[${rule.meta.id}](${rule.meta.id}.md)`);
  });
});
