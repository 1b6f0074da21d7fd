/**
 * Fuzz properties over generated and mutated configs (short budget for `npm test`).
 * NOISELINT_FUZZ_RUNS sets the runs per property (default 150); NOISELINT_FUZZ_SEED replays a
 * failure together with the path fast-check prints. `npm run fuzz` runs a long budget.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { PROPERTIES, newStats } from './properties';
import { checkConfig } from './invariants';
import { SEED_CONFIGS } from './configGen';

const runs = Number(process.env.NOISELINT_FUZZ_RUNS ?? 150);
const seed = process.env.NOISELINT_FUZZ_SEED ? Number(process.env.NOISELINT_FUZZ_SEED) : undefined;

describe('fuzz: analyzeText on hostile configs', () => {
  it('the seed configs themselves produce findings (the harness is not checking an empty pipeline)', () => {
    const stats = newStats();
    for (const c of SEED_CONFIGS) checkConfig(c, stats);
    // Each seed is built to trip several rules (DESIGN section 5), e.g. leading spacing on a
    // zero-SNR schedule, guidance_rescale 1.5, num_inference_steps > T.
    expect(stats.findings).toBeGreaterThanOrEqual(SEED_CONFIGS.length);
    expect(stats.fixes).toBeGreaterThan(0);
  });

  for (const p of PROPERTIES) {
    it(`${p.name}: ${p.description}`, () => {
      const stats = newStats();
      fc.assert(p.property(stats), { numRuns: runs, seed });
      // The generator leans on concept keys, so a real pipeline reports something in 100 runs;
      // zero findings would mean the properties only exercised an empty pipeline.
      if (runs >= 100) expect(stats.findings).toBeGreaterThan(0);
    });
  }

  it('the invariant checker itself rejects a bad span, overlapping edits and a broken fix', async () => {
    const { applyEditsChecked, InvariantError } = await import('./invariants');
    const c = { format: 'yaml' as const, path: 'x.yaml', text: 'a: 1\r\nb: 2\r\n' };
    expect(() => applyEditsChecked(c.text, [{ span: { start: 0, end: 99 }, newText: '' }], 'out of range', c)).toThrow(InvariantError);
    expect(() =>
      applyEditsChecked(
        c.text,
        [
          { span: { start: 0, end: 3 }, newText: 'x' },
          { span: { start: 2, end: 4 }, newText: 'y' },
        ],
        'overlap',
        c,
      ),
    ).toThrow(InvariantError);
    expect(() => applyEditsChecked(c.text, [{ span: { start: 5, end: 5 }, newText: 'z' }], 'inside CRLF', c)).toThrow(InvariantError);
    expect(applyEditsChecked(c.text, [{ span: { start: 3, end: 4 }, newText: '7' }], 'ok', c)).toBe('a: 7\r\nb: 2\r\n');
  });
});
