/**
 * `fix` applies what `check` offers: a file is never "fixable" in check and refused by fix. For
 * every rule fixture, consumer corpus file and example, and for each level of consent, every
 * finding check reports with a fix allowed at that level is gone after the fix loop, the loop
 * never breaks the text, and it leaves nothing it could still apply.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyzeText } from '../../server/src/engine/api';
import { fixText } from '../../server/src/fix/loop';
import { allowedFix, type FixConsent } from '../../server/src/fix/select';
import type { SourceFormat } from '../../server/src/parse/types';

const ROOT = join(__dirname, '..', '..');
const DIRS = ['test/rules/fixtures', 'test/consumers/corpus', 'examples'];
const FORMATS: Record<string, SourceFormat> = { yaml: 'yaml', yml: 'yaml', json: 'json', jsonc: 'jsonc', toml: 'toml' };

function filesUnder(dir: string): string[] {
  const out: string[] = [];
  for (const name of readdirSync(dir)) {
    const path = join(dir, name);
    if (statSync(path).isDirectory()) out.push(...filesUnder(path));
    else if (/\.(ya?ml|jsonc?|toml)$/.test(name) && !/\.expected\.json$|\.after-\d+\./.test(name) && !/noiselint\.project\.ya?ml$/.test(name))
      out.push(path);
  }
  return out;
}

const FILES = DIRS.flatMap((d) => filesUnder(join(ROOT, d))).map((abs) => relative(ROOT, abs));

const CONSENTS: [string, FixConsent][] = [
  ['no consent', { acceptRetraining: false, acceptCommentEdits: false }],
  ['retraining accepted', { acceptRetraining: true, acceptCommentEdits: false }],
  ['every consent', { acceptRetraining: true, acceptCommentEdits: true }],
];

describe('fix applies what check offers', () => {
  it('the sweep covers the fixture, corpus and example files', () => {
    expect(FILES.length).toBeGreaterThan(60);
  });

  for (const path of FILES) {
    it(path, () => {
      const text = readFileSync(join(ROOT, path), 'utf8');
      const format = FORMATS[path.split('.').pop()!]!;
      const analyze = (t: string) => {
        const r = analyzeText(t, { path, format });
        return { parsed: r.parsed, findings: r.findings };
      };
      const first = analyze(text);
      for (const [name, consent] of CONSENTS) {
        const allow = allowedFix(consent);
        const offered = first.findings.filter((f) => f.fixes.some(allow));
        const result = fixText(text, analyze, consent);
        expect(result.brokeText, `${name}: the loop broke the text`).toBe(false);
        if (offered.length === 0) continue;
        expect(result.applied.length, `${name}: check offers ${offered.length} fixes, fix applied none`).toBeGreaterThan(0);
        expect(result.remaining, `${name}: fixes left that fix could still apply`).toBe(0);
        const after = analyze(result.text).findings;
        for (const f of offered) {
          const still = after.filter((x) => x.rule === f.rule && x.message === f.message);
          expect(still, `${name}: ${f.rule} is still there after its fix`).toEqual([]);
        }
      }
    });
  }
});
