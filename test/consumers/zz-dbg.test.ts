import { readFileSync } from 'node:fs';
import { it } from 'vitest';
import { analyzeText } from '../../server/src/engine/api';
import { applyEdits } from '../../server/src/fix';
it('dbg', () => {
  const p = 'test/consumers/corpus/latent-diffusion/flawed/storyboard-ldm-sd-schedule.yaml';
  const text = readFileSync(p, 'utf8');
  const r = analyzeText(text, { path: p });
  const fixed = applyEdits(text, r.findings[0].fixes[0].edits);
  console.log(fixed.slice(0, 600));
  const again = analyzeText(fixed, { path: p });
  for (const x of again.findings) console.log(x.severity, x.rule, x.message.slice(0, 300));
});
