#!/usr/bin/env node
// noiselint benchmarks (`npm run bench`). Every figure is a ratio against a baseline measured in
// the same run on the same machine; bench/RESULTS.md is written from this script's output.
//   node bench/run.mjs [--only a,b,c,d] [--files 10000] [--reps 5] [--no-write]
import { build } from 'esbuild';
import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { parseArgs } from 'node:util';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
process.env.NOISELINT_REPO = root;
const { values } = parseArgs({
  options: {
    only: { type: 'string', default: 'a,b,c,d' },
    files: { type: 'string', default: '10000' },
    reps: { type: 'string', default: '3' },
    'no-write': { type: 'boolean', default: false },
  },
});
const only = new Set(values.only.split(','));
const FILES = Number(values.files);
const REPS = Number(values.reps);

const log = (s) => process.stderr.write(`${s}\n`);
const median = (xs) => quantile(xs, 0.5);
function quantile(xs, q) {
  const s = [...xs].sort((a, b) => a - b);
  if (s.length === 0) return NaN;
  // Nearest rank.
  return s[Math.min(s.length - 1, Math.max(0, Math.ceil(q * s.length) - 1))];
}
const ms = (x) => (x >= 100 ? x.toFixed(0) : x >= 10 ? x.toFixed(1) : x >= 1 ? x.toFixed(2) : x.toFixed(3));
const ratio = (a, b) => (a / b).toFixed(2);
const verdict = (value, target) => (value <= target ? 'met' : '**missed**');

// ---------------------------------------------------------------- build
log('building the CLI bundle and the benchmark harness...');
{
  const r = spawnSync(process.execPath, ['scripts/build.mjs'], { cwd: root, encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`build failed:\n${r.stderr}`);
}
const outDir = join(root, 'build', 'bench');
mkdirSync(outDir, { recursive: true });
const harnessFile = join(outDir, 'harness.mjs');
await build({
  entryPoints: [join(root, 'bench/harness.ts')],
  outfile: harnessFile,
  bundle: true,
  platform: 'node',
  target: 'node20',
  format: 'esm',
  logLevel: 'warning',
  // jsonc-parser's UMD build hides its requires from the bundler; its ESM build does not.
  mainFields: ['module', 'main'],
  banner: { js: "import { createRequire as __nlCreateRequire } from 'node:module'; const require = __nlCreateRequire(import.meta.url);" },
});
const H = await import(pathToFileURL(harnessFile).href);
const CLI = join(root, 'server/dist/noiselint.js');

const machine = {
  cpu: os.cpus()[0]?.model?.trim() ?? 'unknown',
  cores: os.cpus().length,
  memoryGb: (os.totalmem() / 1024 ** 3).toFixed(1),
  node: process.version,
  platform: `${os.type()} ${os.release()} ${os.arch()}`,
  date: new Date().toISOString().replace('T', ' ').replace(/\.\d+Z$/, ' UTC'),
};
const sections = [];
const summary = [];

// ---------------------------------------------------------------- (a) corpus check
if (only.has('a')) {
  const corpus = join(root, 'bench', 'corpus');
  log(`(a) writing ${FILES} configs to bench/corpus ...`);
  const files = H.writeCorpus(corpus, FILES);
  const bytes = files.reduce((n, f) => n + readFileSync(f.path).length, 0);
  const schema = JSON.parse(readFileSync(join(root, 'bench/schema.json'), 'utf8'));
  const validateDir = H.schemaValidator(schema);
  const runs = { parse: [], core: [], command: [], schema: [] };
  let facts = {};
  const time = async (fn) => {
    const t0 = performance.now();
    const out = await fn();
    return [performance.now() - t0, out];
  };
  // One warm-up pass of each, then REPS interleaved passes.
  for (let rep = -1; rep < REPS; rep++) {
    const [tp, p] = await time(() => H.parseOnly(corpus));
    const [tc, c] = await time(() => H.coreCheck(corpus));
    const [tk, k] = await time(() => H.checkCommand(corpus));
    const [ts, s] = await time(() => validateDir(corpus));
    if (rep >= 0) {
      runs.parse.push(tp);
      runs.core.push(tc);
      runs.command.push(tk);
      runs.schema.push(ts);
    }
    facts = { files: p.files, problems: p.problems, findings: c.findings, exit: k.code, reportBytes: k.outputBytes, invalid: s.invalid };
    log(`  pass ${rep + 1}/${REPS}: parse ${ms(tp)} ms, core check ${ms(tc)} ms, check command ${ms(tk)} ms, ajv ${ms(ts)} ms`);
  }
  const cliRuns = [];
  for (let i = 0; i < 3; i++) {
    const t0 = performance.now();
    const r = spawnSync(process.execPath, [CLI, 'check', '.', '--format', 'json'], { cwd: corpus, stdio: ['ignore', 'ignore', 'pipe'], encoding: 'utf8' });
    cliRuns.push(performance.now() - t0);
    if (r.status !== 0 && r.status !== 1) throw new Error(`CLI check failed (${r.status}): ${r.stderr.slice(0, 500)}`);
  }
  const m = { parse: median(runs.parse), core: median(runs.core), command: median(runs.command), schema: median(runs.schema), cli: median(cliRuns) };
  const rCoreParse = m.core / m.parse;
  const rCmdParse = m.command / m.parse;
  const rCoreSchema = m.core / m.schema;
  const rCmdSchema = m.command / m.schema;
  summary.push(['a', 'check over 10,000 configs vs parse-only (in process)', `${ratio(m.core, m.parse)}x (core), ${ratio(m.command, m.parse)}x (whole command)`, '<= 1.3x', verdict(rCmdParse, 1.3)]);
  summary.push(['a', 'check over 10,000 configs vs ajv schema validation', `${ratio(m.core, m.schema)}x (core), ${ratio(m.command, m.schema)}x (whole command)`, '<= 1.0x', verdict(rCmdSchema, 1.0)]);
  sections.push(`## (a) \`check\` over a corpus of ${facts.files} configs

Corpus: ${facts.files} generated Lanternfish Pictures configs (bench/corpus.ts; 60% YAML, 30% JSON,
10% JSONC; training and sampling files in folders of 20), ${(bytes / 1024 / 1024).toFixed(1)} MB in total.
Median of ${REPS} interleaved passes after one warm-up pass, all in one process.

| measurement | median ms | per file µs | vs parse-only | vs ajv |
|---|---:|---:|---:|---:|
| parse-only: discover + read + \`parseText\` (located tree) | ${ms(m.parse)} | ${(1000 * m.parse / facts.files).toFixed(0)} | 1.00x | ${ratio(m.parse, m.schema)}x |
| ajv: discover + read + parse to plain data (yaml / JSON.parse / jsonc-parser) + ajv@8 validate (bench/schema.json) | ${ms(m.schema)} | ${(1000 * m.schema / facts.files).toFixed(0)} | ${ratio(m.schema, m.parse)}x | 1.00x |
| core check: discover + project file + read + \`analyzeText\` (rules included) | ${ms(m.core)} | ${(1000 * m.core / facts.files).toFixed(0)} | **${ratio(m.core, m.parse)}x** | **${ratio(m.core, m.schema)}x** |
| whole \`check\` command in process (adds pairing of training and sampling files, JSON report) | ${ms(m.command)} | ${(1000 * m.command / facts.files).toFixed(0)} | **${ratio(m.command, m.parse)}x** | **${ratio(m.command, m.schema)}x** |
| CLI process end to end: \`node server/dist/noiselint.js check . --format json\` (median of 3) | ${ms(m.cli)} | ${(1000 * m.cli / facts.files).toFixed(0)} | ${ratio(m.cli, m.parse)}x | ${ratio(m.cli, m.schema)}x |

Facts of the run: ${facts.findings} findings (core), exit code ${facts.exit}, JSON report ${(facts.reportBytes / 1024 / 1024).toFixed(1)} MB,
${facts.invalid} files rejected by the schema, ${facts.problems} parse problems.
Spread (min-max ms): parse ${ms(Math.min(...runs.parse))}-${ms(Math.max(...runs.parse))},
core ${ms(Math.min(...runs.core))}-${ms(Math.max(...runs.core))}, command ${ms(Math.min(...runs.command))}-${ms(Math.max(...runs.command))},
ajv ${ms(Math.min(...runs.schema))}-${ms(Math.max(...runs.schema))}.
`);
  log(`(a) parse ${ms(m.parse)} ms, core ${ms(m.core)} ms (${rCoreParse.toFixed(2)}x), command ${ms(m.command)} ms (${rCmdParse.toFixed(2)}x), ajv ${ms(m.schema)} ms (core/ajv ${rCoreSchema.toFixed(2)}x), CLI ${ms(m.cli)} ms`);
}

// ---------------------------------------------------------------- (b) LSP latency
if (only.has('b')) {
  log('(b) LSP didChange -> diagnostics latency ...');
  const dir = join(root, 'build', 'bench', 'lsp');
  mkdirSync(dir, { recursive: true });
  const client = await H.LspTestClient.start({ cwd: dir, settings: { debounceMs: 0 } });
  const rows = [];
  let floor = [];
  try {
    // IPC floor: a trivial request round trip (summary of an unknown document).
    for (let i = 0; i < 200; i++) {
      const t0 = performance.now();
      await client.connection.sendRequest('noiselint/summary', { uri: 'file:///nowhere.yaml' }).catch(() => null);
      floor.push(performance.now() - t0);
    }
    for (const lines of [50, 500, 5000]) {
      const uri = `file://${join(dir, `doc-${lines}.yaml`)}`;
      const samples = lines >= 5000 ? 60 : 200;
      client.open(uri, H.configText(0, 0, lines));
      await client.settled(uri, 1);
      const lat = [];
      for (let k = 1; k <= samples; k++) {
        const text = H.configText(k, k, lines);
        const v = k + 1;
        const t0 = performance.now();
        client.change(uri, v, text);
        const p = await client.waitFor(uri, (x) => x.version === v);
        lat.push(p.at - t0);
      }
      const sample = H.configText(7, 7, lines);
      const parse = H.parseTimes(sample, 'yaml', Math.max(30, Math.floor(samples / 2)));
      const analyze = H.analyzeTimes(sample, join(dir, `doc-${lines}.yaml`), Math.max(30, Math.floor(samples / 2)));
      rows.push({ lines, bytes: sample.length, samples, p50: median(lat), p99: quantile(lat, 0.99), parse50: median(parse), parse99: quantile(parse, 0.99), analyze50: median(analyze) });
      client.close(uri);
    }
  } finally {
    await client.stop();
  }
  const f50 = median(floor);
  for (const r of rows) {
    summary.push(['b', `LSP diagnostics latency, ${r.lines}-line file: p99 vs parse-only`, `${ratio(r.p99, r.parse50)}x (p99 ${ms(r.p99)} ms)`, '<= 3x', verdict(r.p99 / r.parse50, 3)]);
  }
  sections.push(`## (b) LSP didChange -> publishDiagnostics latency

The real server over stdio (\`noiselint lsp --stdio\`), driven by the test client (test/load/lspClient.ts)
with \`debounceMs: 0\` so that the figure is processing time, not the editor's quiet period (the
default debounce of 150 ms is added on top in an editor, by design). One change at a time: full
text sent, then wait for the diagnostics of that version. Parse-only and analyzeText times are
measured in the benchmark process on the same text. IPC floor (a trivial request round trip):
p50 ${ms(f50)} ms, p99 ${ms(quantile(floor, 0.99))} ms.

| lines | KB | samples | latency p50 ms | latency p99 ms | parse-only p50 ms | parse-only p99 ms | analyzeText p50 ms | p99 latency / parse p50 | p50 latency / parse p50 |
|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|
${rows.map((r) => `| ${r.lines} | ${(r.bytes / 1024).toFixed(1)} | ${r.samples} | ${ms(r.p50)} | ${ms(r.p99)} | ${ms(r.parse50)} | ${ms(r.parse99)} | ${ms(r.analyze50)} | **${ratio(r.p99, r.parse50)}x** | ${ratio(r.p50, r.parse50)}x |`).join('\n')}
`);
  log(`(b) ${rows.map((r) => `${r.lines} lines: p50 ${ms(r.p50)} p99 ${ms(r.p99)} parse ${ms(r.parse50)} ms`).join('; ')}`);
}

// ---------------------------------------------------------------- (c) cold start
if (only.has('c')) {
  log('(c) CLI cold start ...');
  const dir = join(root, 'build', 'bench', 'cold');
  mkdirSync(dir, { recursive: true });
  writeFileSync(join(dir, 'train.yaml'), H.configText(0, 0, 50));
  const cases = {
    node: [process.execPath, ['-e', '0']],
    version: [process.execPath, [CLI, '--version']],
    check: [process.execPath, [CLI, 'check', 'train.yaml']],
  };
  const t = { node: [], version: [], check: [] };
  for (let i = 0; i < 25; i++) {
    for (const [name, [cmd, args]] of Object.entries(cases)) {
      const t0 = performance.now();
      spawnSync(cmd, args, { cwd: dir, stdio: 'ignore' });
      if (i >= 3) t[name].push(performance.now() - t0);
    }
  }
  const n = median(t.node);
  const v = median(t.version);
  const c = median(t.check);
  summary.push(['c', 'CLI cold start (`--version`) vs `node -e 0`', `${ratio(v, n)}x`, '<= 3x', verdict(v / n, 3)]);
  summary.push(['c', 'CLI cold start with one 50-line file (`check`) vs `node -e 0`', `${ratio(c, n)}x`, '<= 3x', verdict(c / n, 3)]);
  sections.push(`## (c) CLI cold start

Median wall time of ${t.node.length} spawns each (interleaved, after 3 warm-up rounds).

| command | median ms | vs \`node -e 0\` |
|---|---:|---:|
| \`node -e 0\` | ${ms(n)} | 1.00x |
| \`node server/dist/noiselint.js --version\` | ${ms(v)} | **${ratio(v, n)}x** |
| \`node server/dist/noiselint.js check train.yaml\` (50 lines) | ${ms(c)} | **${ratio(c, n)}x** |
`);
  log(`(c) node ${ms(n)} ms, --version ${ms(v)} ms, check ${ms(c)} ms`);
}

// ---------------------------------------------------------------- (d) memory with 2,000 open documents
if (only.has('d')) {
  log('(d) server memory with 2,000 open documents ...');
  const dir = join(root, 'build', 'bench', 'mem');
  mkdirSync(dir, { recursive: true });
  const client = await H.LspTestClient.start({ cwd: dir, settings: { debounceMs: 0 } });
  let base;
  let after;
  let bytes = 0;
  try {
    const first = `file://${join(dir, 'first.yaml')}`;
    client.open(first, H.configText(0, 0));
    await client.settled(first, 1);
    base = client.rssKb();
    const uris = [];
    for (let i = 0; i < 2000; i++) {
      const uri = `file://${join(dir, `run-${i}.yaml`)}`;
      const text = H.configText(i, i);
      bytes += text.length;
      uris.push(uri);
      client.open(uri, text);
    }
    for (const uri of uris) await client.waitFor(uri, (p) => p.version === 1 || p.version === undefined);
    after = client.rssKb();
  } finally {
    await client.stop();
  }
  const mb = after / 1024;
  summary.push(['d', 'server RSS with 2,000 open 50-line documents', `${mb.toFixed(0)} MB`, '<= 150 MB', verdict(mb, 150)]);
  sections.push(`## (d) Server memory with 2,000 open documents

Resident set size (VmRSS from /proc/<pid>/status) of the server process: ${(base / 1024).toFixed(0)} MB after
initialize and one document; **${mb.toFixed(0)} MB** once 2,000 documents of 50 lines
(${(bytes / 1024 / 1024).toFixed(1)} MB of text in total) are open and each has its diagnostics.
`);
  log(`(d) RSS ${(base / 1024).toFixed(0)} MB -> ${mb.toFixed(0)} MB`);
}

// ---------------------------------------------------------------- report
const header = `# Benchmark results

Written by \`npm run bench\` (bench/run.mjs); do not edit by hand. Ratios compare figures measured in
the same run on the same machine. Timings are wall-clock medians; nothing here is asserted in a test.

Machine: ${machine.cpu}, ${machine.cores} cores, ${machine.memoryGb} GB memory, Node ${machine.node}, ${machine.platform}.
Date: ${machine.date}. The machine is shared with other work, so expect some noise between runs.

## Summary

| # | measures | result | target | |
|---|---|---|---|---|
${summary.map((r) => `| ${r.join(' | ')} |`).join('\n')}
`;
const notesFile = join(root, 'bench', 'NOTES.md');
let notes = '';
try {
  notes = `\n${readFileSync(notesFile, 'utf8')}`;
} catch {
  // no notes yet
}
const report = `${header}\n${sections.join('\n')}${notes}`;
process.stdout.write(report);
if (!values['no-write']) {
  writeFileSync(join(root, 'bench', 'RESULTS.md'), report);
  log('wrote bench/RESULTS.md');
}
