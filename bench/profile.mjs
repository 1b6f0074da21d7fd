#!/usr/bin/env node
// Profiles one benchmark measurement with the V8 sampling profiler and prints the functions that
// dominate (self time and inclusive time). Needs the harness bundle and the corpus that
// `node bench/run.mjs --only a` leaves behind.
//   node bench/profile.mjs core|command|command-workers|parse|ajv|lsp-analyze|lsp-server [--lines 5000] [--dir bench/monorepo] [--passes 3]
// --passes N runs the corpus measurements N times in the profiled process, so that most samples
// are of warmed-up code, as in the bench's medians (the first pass includes compiling).
import { spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readdirSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { parseArgs } from 'node:util';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const { values, positionals } = parseArgs({
  allowPositionals: true,
  options: {
    dir: { type: 'string', default: 'bench/corpus' },
    lines: { type: 'string', default: '5000' },
    child: { type: 'boolean', default: false },
    top: { type: 'string', default: '25' },
    passes: { type: 'string', default: '1' },
  },
});
const what = positionals[0] ?? 'core';
const harness = join(root, 'build/bench/harness.mjs');
const corpus = join(root, values.dir);

if (values.child) {
  process.env.NOISELINT_REPO = root;
  const H = await import(pathToFileURL(harness).href);
  for (let pass = 0; pass < Math.max(1, Number(values.passes)); pass++) {
    if (what === 'core') H.coreCheck(corpus);
    else if (what === 'command') await H.checkCommand(corpus, ['--workers', '1']);
    else if (what === 'command-workers') await H.checkCommand(corpus);
    else if (what === 'parse') H.parseOnly(corpus);
    else if (what === 'ajv') H.schemaValidator(JSON.parse(readFileSync(join(root, 'bench/schema.json'), 'utf8')))(corpus);
    else if (what === 'lsp-analyze') H.analyzeTimes(H.configText(7, 7, Number(values.lines)), join(root, 'build/bench/lsp/doc.yaml'), 10);
    else throw new Error(`unknown measurement ${what}`);
  }
  process.exit(0);
}

const dir = mkdtempSync(join(tmpdir(), 'noiselint-prof-'));
if (what === 'lsp-server') {
  // The language server itself under the profiler: 200 full-text changes of a --lines file, one
  // at a time (as bench (b) sends them), with a debounce of 0.
  process.env.NOISELINT_REPO = root;
  const H = await import(pathToFileURL(harness).href);
  const lspDir = join(root, 'build/bench/lsp');
  mkdirSync(lspDir, { recursive: true });
  const client = await H.LspTestClient.start({ cwd: lspDir, settings: { debounceMs: 0 }, nodeArgs: ['--cpu-prof', `--cpu-prof-dir=${dir}`] });
  const uri = `file://${join(lspDir, 'profiled.yaml')}`;
  const lines = Number(values.lines);
  client.open(uri, H.configText(0, 0, lines));
  await client.settled(uri, 1);
  for (let k = 1; k <= 200; k++) {
    client.change(uri, k + 1, H.configText(k, k, lines));
    await client.waitFor(uri, (x) => x.version === k + 1);
  }
  await client.stop();
} else {
  const r = spawnSync(
    process.execPath,
    [
      '--cpu-prof',
      `--cpu-prof-dir=${dir}`,
      fileURLToPath(import.meta.url),
      what,
      '--child',
      '--lines',
      values.lines,
      '--dir',
      values.dir,
      '--passes',
      values.passes,
    ],
    { stdio: 'inherit' },
  );
  if (r.status !== 0) process.exit(r.status ?? 1);
}
const file = join(
  dir,
  readdirSync(dir).find((f) => f.endsWith('.cpuprofile')),
);
const profile = JSON.parse(readFileSync(file, 'utf8'));
const byId = new Map(profile.nodes.map((n) => [n.id, n]));
const parent = new Map();
for (const n of profile.nodes) for (const c of n.children ?? []) parent.set(c, n.id);
const timeOf = new Map();
profile.samples.forEach((id, i) => timeOf.set(id, (timeOf.get(id) ?? 0) + (profile.timeDeltas[i] ?? 0)));
const name = (n) => {
  const url = n.callFrame.url.replace(/^file:\/\//, '').replace(root + '/', '');
  return `${n.callFrame.functionName || '(anonymous)'} ${url ? `${url.split('/').slice(-2).join('/')}:${n.callFrame.lineNumber + 1}` : ''}`.trim();
};
const self = new Map();
const total = new Map();
let all = 0;
for (const [id, t] of timeOf) {
  all += t;
  const n = byId.get(id);
  self.set(name(n), (self.get(name(n)) ?? 0) + t);
  const seen = new Set();
  for (let cur = id; cur !== undefined; cur = parent.get(cur)) {
    const k = name(byId.get(cur));
    if (!seen.has(k)) {
      seen.add(k);
      total.set(k, (total.get(k) ?? 0) + t);
    }
  }
}
const top = Number(values.top);
const fmt = ([k, t]) => `${(t / 1000).toFixed(0).padStart(7)} ms ${((100 * t) / all).toFixed(1).padStart(5)}%  ${k}`;
console.log(`profile of "${what}" (${(all / 1000).toFixed(0)} ms sampled; ${file})`);
console.log('\nself time:');
console.log(
  [...self]
    .sort((a, b) => b[1] - a[1])
    .slice(0, top)
    .map(fmt)
    .join('\n'),
);
console.log('\ninclusive time (harness.mjs lines are in build/bench/harness.mjs):');
console.log(
  [...total]
    .sort((a, b) => b[1] - a[1])
    .filter(([k]) => !/^\((root|program)\)|^(anonymous)|runMain|executeUserEntryPoint|Module\.|loadESM|import|run /.test(k))
    .slice(0, top * 2)
    .map(fmt)
    .join('\n'),
);
