/**
 * Runs every fixture under test/rules/fixtures/<rule-id>/ with only that rule enabled and compares
 * findings, flagged text, message numbers, related locations and fixes with its expectation.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ALL_RULE_METAS, RULE_IDS } from '../../server/src/rules';
import {
  applyEdits,
  collectFixtures,
  messageText,
  partnerDocuments,
  projectFor,
  runOnly,
  validateExpectation,
  type FixtureExpectation,
} from './harness';

const { fixtures, layoutProblems } = collectFixtures();

describe('fixture layout', () => {
  it('has no orphaned, missing or duplicated fixture files', () => {
    expect(layoutProblems).toEqual([]);
  });

  it('has fixtures for every rule id, and no folder for an unknown id', () => {
    const folders = new Set(fixtures.map((f) => f.rule));
    for (const id of RULE_IDS) expect(folders.has(id), `fixtures for ${id}`).toBe(true);
    const known = new Set(ALL_RULE_METAS.map((m) => m.id));
    for (const folder of folders) expect(known.has(folder), `folder ${folder} names a rule`).toBe(true);
  });

  it('uses the demo studio in every fixture (no real names)', () => {
    for (const f of fixtures) expect(readFileSync(f.inputFile, 'utf8'), f.inputFile).toMatch(/lanternfish/i);
  });

  it('has at least one fixture with and one without findings per rule', () => {
    for (const id of RULE_IDS) {
      const mine = fixtures.filter((f) => f.rule === id).map((f) => JSON.parse(readFileSync(f.expectedFile, 'utf8')) as FixtureExpectation);
      expect(
        mine.some((e) => e.findings.length > 0),
        `${id}: a fixture that fires`,
      ).toBe(true);
      expect(
        mine.some((e) => e.findings.length === 0),
        `${id}: a fixture that stays quiet`,
      ).toBe(true);
    }
  });
});

describe.each(fixtures.map((f) => [`${f.rule}/${f.name}`, f] as const))('%s', (_label, fixture) => {
  it('matches its expectation', () => {
    const expectation = JSON.parse(readFileSync(fixture.expectedFile, 'utf8')) as FixtureExpectation;
    const meta = ALL_RULE_METAS.find((m) => m.id === fixture.rule)!;
    expect(validateExpectation(fixture.rule, expectation)).toEqual([]);
    const text = readFileSync(fixture.inputFile, 'utf8');
    const project = projectFor(expectation, fixture.rule);
    const partners = expectation.partner ? partnerDocuments(join(fixture.dir, expectation.partner), expectation.partner, project) : undefined;
    const pairRole = expectation.pairRole ?? (expectation.partner ? 'sampling' : undefined);
    const run = (t: string) => runOnly(fixture.rule, t, { path: fixture.inputFile, format: fixture.format, project, partners, pairRole });
    const { findings, ruleErrors } = run(text);
    expect(ruleErrors).toEqual([]);

    const shown = findings.map((f) => `${f.severity} ${JSON.stringify(text.slice(f.span.start, f.span.end))}: ${f.message}`);
    expect(findings.length, `findings:\n${shown.join('\n')}`).toBe(expectation.findings.length);

    expectation.findings.forEach((want, i) => {
      const got = findings[i]!;
      const where = `finding ${i} (${shown[i]})`;
      expect(got.rule, where).toBe(want.rule);
      expect(got.severity, where).toBe(want.severity);
      expect(got.documentIndex, where).toBe(want.document ?? 0);
      expect(text.slice(got.span.start, got.span.end), where).toBe(want.text);
      for (const part of want.message) expect(got.message, where).toContain(messageText(part));

      const related = want.related ?? [];
      expect(got.related.length, `${where}: related`).toBe(related.length);
      related.forEach((r, k) => {
        const rel = got.related[k]!;
        expect(rel.path, `${where}: related ${k} path`).toBe(r.path);
        const relText = r.path ? readFileSync(join(fixture.dir, r.path), 'utf8') : text;
        expect(relText.slice(rel.span.start, rel.span.end), `${where}: related ${k}`).toBe(r.text);
      });

      const titles = got.fixes.map((f) => f.title);
      if (meta.repair?.everyFinding) expect(got.fixes.length, `${where}: the rule promises a repair for every finding`).toBeGreaterThan(0);
      expect(got.fixes.length, `${where}: fixes ${JSON.stringify(titles)}`).toBe(want.fixes.length);
      expect(got.fixes.filter((f) => f.preferred).length, `${where}: preferred fixes`).toBeLessThanOrEqual(1);
      want.fixes.forEach((wantFix, k) => {
        const fix = got.fixes[k]!;
        expect(fix.title, `${where}: fix ${k}`).toBe(wantFix.title);
        expect(fix.effect, `${where}: fix ${k} effect`).toBe(wantFix.effect);
        expect(fix.touchesComment, `${where}: fix ${k} touches a comment`).toBe(wantFix.touchesComment ?? false);
        expect(fix.preferred, `${where}: fix ${k} preferred`).toBe(wantFix.preferred);
        expect(meta.repair?.effects ?? [], `${where}: the rule's repair metadata names this effect`).toContain(fix.effect);
        if (fix.effect === 'needs-retraining') {
          expect(fix.title, 'a fix that changes training says so').toContain('(needs fine-tuning or retraining)');
        } else {
          expect(fix.title, 'a sampling-only fix claims no retraining').not.toMatch(/retrain|fine-tun/i);
        }
        const after = applyEdits(text, fix.edits);
        const expectedAfter = readFileSync(join(fixture.dir, wantFix.after), 'utf8');
        expect(after, `${where}: text after fix ${k} (${wantFix.after})`).toBe(expectedAfter);
        // The fixed text parses cleanly.
        const reparsed = runOnly('parse-error', after, { path: fixture.inputFile, format: fixture.format });
        expect(
          reparsed.findings.map((f) => f.message),
          `${where}: fix ${k} leaves readable text`,
        ).toEqual([]);
        if (fix.preferred) {
          // The preferred fix removes this finding.
          const again = run(after).findings;
          expect(again.length, `${where}: findings after the preferred fix`).toBeLessThan(findings.length);
        }
      });
    });
  });
});
