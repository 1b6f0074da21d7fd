#!/usr/bin/env node
// Long fuzz run: the properties of test/fuzz (bundled with esbuild) with a large budget.
//   npm run fuzz                          20,000 runs per property (or --minutes per property)
//   npm run fuzz -- --runs 5000 --minutes 2 --property mutated
//   npm run fuzz -- --seed 1234 --path "57:3:1" --property mutated   (replay a failure)
import { build } from 'esbuild';
import { mkdirSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const { values } = parseArgs({
  options: {
    runs: { type: 'string', default: '20000' },
    minutes: { type: 'string' },
    seed: { type: 'string' },
    path: { type: 'string' },
    property: { type: 'string' },
  },
});

const outDir = join(root, 'build', 'fuzz');
mkdirSync(outDir, { recursive: true });
const outfile = join(outDir, 'properties.cjs');
await build({
  entryPoints: [join(root, 'test/fuzz/properties.ts')],
  outfile,
  bundle: true,
  platform: 'node',
  target: 'node20',
  format: 'cjs',
  logLevel: 'warning',
  external: ['fast-check'],
  // jsonc-parser's UMD build hides its requires from the bundler; its ESM build does not.
  mainFields: ['module', 'main'],
});
const require = createRequire(import.meta.url);
const fc = require('fast-check');
const { PROPERTIES, newStats } = require(outfile);

const numRuns = Number(values.runs);
const timeLimit = values.minutes ? Number(values.minutes) * 60_000 : undefined;
const selected = PROPERTIES.filter((p) => !values.property || p.name === values.property);
if (selected.length === 0) {
  console.error(`no property named "${values.property}" (have: ${PROPERTIES.map((p) => p.name).join(', ')})`);
  process.exit(2);
}

let failed = false;
for (const p of selected) {
  const seed = values.seed !== undefined ? Number(values.seed) : (Date.now() ^ (Math.random() * 0x100000000)) | 0;
  const stats = newStats();
  const started = Date.now();
  const details = fc.check(p.property(stats), {
    numRuns,
    seed,
    path: values.path,
    interruptAfterTimeLimit: timeLimit,
    markInterruptAsFailure: false,
    endOnFailure: false,
  });
  const secs = ((Date.now() - started) / 1000).toFixed(1);
  const line =
    `${p.name}: ${details.numRuns} runs in ${secs} s, seed ${details.seed}` +
    `, ${stats.findings} findings and ${stats.fixes} fixes checked, rules seen: ${[...stats.rules].sort().join(', ') || 'none'}`;
  if (details.failed) {
    failed = true;
    console.log(`FAIL ${line}`);
    console.log(`  counterexample path ${details.counterexamplePath}`);
    console.log(`  replay: npm run fuzz -- --property ${p.name} --seed ${details.seed} --path "${details.counterexamplePath}" --runs 1`);
    console.log(`  or: NOISELINT_FUZZ_SEED=${details.seed} npx vitest run test/fuzz`);
    const err = details.errorInstance;
    console.log(
      String(err instanceof Error ? err.message : err)
        .split('\n')
        .slice(0, 12)
        .join('\n'),
    );
  } else {
    console.log(`ok   ${line}${details.interrupted ? ' (time budget reached)' : ''}`);
  }
}
process.exitCode = failed ? 1 : 0;
