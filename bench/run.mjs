#!/usr/bin/env node
// noiselint benchmarks (`npm run bench`). Every figure is a ratio against a baseline measured in
// the same run on the same machine; bench/RESULTS.md is written from this script's output.
//   node bench/run.mjs [--only a,b,c,d,e,f] [--files 10000] [--reps 3] [--no-write]
//   NOISELINT_BENCH_SCALE=0.1 node bench/run.mjs   (every corpus 10x smaller)
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
    only: { type: 'string', default: 'a,b,c,d,e,f' },
    files: { type: 'string', default: '10000' },
    reps: { type: 'string', default: '3' },
    'no-write': { type: 'boolean', default: false },
  },
});
const only = new Set(values.only.split(','));
// NOISELINT_BENCH_SCALE (default 1) scales every corpus size down (or up) for slow machines:
// 0.1 checks 1,000 configs in (a) and (e) and 100 / 1,000 / 5,000 in (f).
const SCALE = Number(process.env.NOISELINT_BENCH_SCALE ?? '1') || 1;
const FILES = Math.max(100, Math.round(Number(values.files) * SCALE));
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
  date: new Date()
    .toISOString()
    .replace('T', ' ')
    .replace(/\.\d+Z$/, ' UTC'),
};
const sections = [];
const summary = [];

// ---------------------------------------------------------------- (a) corpus check
// The baseline of every corpus figure is a plain parse with the standard libraries (discover +
// read + yaml.parse / JSON.parse / jsonc-parser parse), which is what a schema validator does
// before it validates; ajv validation of the same files stands beside it. Our own located parse
// is shown too, but never used as a baseline (a faster located parse would make every ratio look
// worse).
const time = async (fn) => {
  const t0 = performance.now();
  const out = await fn();
  return [performance.now() - t0, out];
};
const mb = (bytes) => (bytes / 1024 / 1024).toFixed(1);

/** REPS interleaved passes (after one warm-up pass) of each measurement over `dir`. */
async function corpusRuns(dir, measures) {
  const runs = Object.fromEntries(Object.keys(measures).map((k) => [k, []]));
  const last = {};
  for (let rep = -1; rep < REPS; rep++) {
    const line = [];
    for (const [name, fn] of Object.entries(measures)) {
      const [t, out] = await time(fn);
      if (rep >= 0) runs[name].push(t);
      last[name] = out;
      line.push(`${name} ${ms(t)} ms`);
    }
    log(`  pass ${rep + 1}/${REPS}: ${line.join(', ')}`);
  }
  const m = Object.fromEntries(Object.entries(runs).map(([k, xs]) => [k, median(xs)]));
  const spread = Object.entries(runs)
    .map(([k, xs]) => `${k} ${ms(Math.min(...xs))}-${ms(Math.max(...xs))}`)
    .join(', ');
  // Paired: the two figures of one pass ran minutes apart at most, so their ratio is less at the
  // mercy of the load on a shared machine than the ratio of two medians taken from different passes.
  const paired = (a, b) => median(runs[a].map((x, i) => x / runs[b][i]));
  const pairs = (a, b) => runs[a].map((x, i) => (x / runs[b][i]).toFixed(2)).join(', ');
  return { m, last, spread, paired, pairs };
}

/** Wall time of a child process, median of `n`. */
function processRuns(n, cmd, args, cwd) {
  const xs = [];
  for (let i = 0; i < n; i++) {
    const t0 = performance.now();
    const r = spawnSync(cmd, args, { cwd, stdio: ['ignore', 'ignore', 'pipe'], encoding: 'utf8' });
    xs.push(performance.now() - t0);
    if (r.status !== 0 && r.status !== 1) throw new Error(`${args.join(' ')} failed (${r.status}): ${r.stderr.slice(0, 500)}`);
  }
  return median(xs);
}

/** Whether the check command has worker threads (`--workers`). */
const WORKERS = spawnSync(process.execPath, [CLI, 'check', '--help'], { encoding: 'utf8' }).stdout.includes('--workers');
const schema = JSON.parse(readFileSync(join(root, 'bench/schema.json'), 'utf8'));
const validateDir = H.schemaValidator(schema);
const perFile = (t, n) => ((1000 * t) / n).toFixed(0);

if (only.has('a')) {
  const corpus = join(root, 'bench', 'corpus');
  log(`(a) writing ${FILES} configs to bench/corpus ...`);
  const files = H.writeCorpus(corpus, FILES);
  const bytes = files.reduce((n, f) => n + readFileSync(f.path).length, 0);
  const measures = {
    plain: () => H.plainParse(corpus),
    ajv: () => validateDir(corpus),
    located: () => H.parseOnly(corpus),
    core: () => H.coreCheck(corpus),
    command: () => H.checkCommand(corpus, WORKERS ? ['--workers', '1'] : []),
    ...(WORKERS ? { workers: () => H.checkCommand(corpus) } : {}),
  };
  const { m, last, spread, paired, pairs } = await corpusRuns(corpus, measures);
  const cli = processRuns(3, process.execPath, [CLI, 'check', '.', '--format', 'json', ...(WORKERS ? ['--workers', '1'] : [])], corpus);
  const cliWorkers = WORKERS ? processRuns(3, process.execPath, [CLI, 'check', '.', '--format', 'json'], corpus) : NaN;
  const plainScript = processRuns(3, process.execPath, [join(root, 'bench/child.mjs'), 'plain', corpus], corpus);
  const n = last.plain.files;
  const found = H.findingsIn(last.command.summary);
  summary.push([
    'a',
    `whole \`check\` over ${n} configs vs plain parse`,
    `${paired('command', 'plain').toFixed(2)}x`,
    '<= 1.3x',
    verdict(paired('command', 'plain'), 1.3),
  ]);
  summary.push([
    'a',
    `same vs ajv validation of the same files (one thread)`,
    `${paired('command', 'ajv').toFixed(2)}x`,
    '<= 1.0x',
    verdict(paired('command', 'ajv'), 1.0),
  ]);
  if (WORKERS)
    summary.push([
      'a',
      `same with workers (${os.availableParallelism?.() ?? machine.cores} cores) vs ajv`,
      `${paired('workers', 'ajv').toFixed(2)}x`,
      '<= 0.8x',
      verdict(paired('workers', 'ajv'), 0.8),
    ]);
  summary.push([
    'g',
    'JSON report bytes per finding (default report)',
    `${(last.command.outputBytes / Math.max(1, found)).toFixed(0)} B`,
    '<= 512 B',
    verdict(last.command.outputBytes / Math.max(1, found), 512),
  ]);
  const row = (label, t) => `| ${label} | ${ms(t)} | ${perFile(t, n)} | ${ratio(t, m.plain)}x | ${ratio(t, m.ajv)}x |`;
  sections.push(`## (a) \`check\` over a corpus of ${n} diffusion configs

Corpus: ${n} generated Lanternfish Pictures configs (test/load/corpus.ts; 60% YAML, 30% JSON,
10% JSONC; training and sampling files in folders of 20), ${mb(bytes)} MB in total.
Median of ${REPS} interleaved passes after one warm-up pass, all in one process.

| measurement | median ms | per file µs | vs plain parse | vs ajv |
|---|---:|---:|---:|---:|
${[
  row('**plain parse** (baseline): discover + read + `yaml.parse` / `JSON.parse` / jsonc-parser `parse`', m.plain),
  row('ajv: the plain parse + ajv@8 validation (bench/schema.json)', m.ajv),
  row('located parse: discover + read + `parseText` (our tree with source ranges)', m.located),
  row('core check: discover + project file + read + `analyzeText` (rules included)', m.core),
  row('**whole `check` command** in process, one thread (pairing, JSON report)', m.command),
  ...(WORKERS ? [row('whole `check` command in process, workers (default count)', m.workers)] : []),
  row(`CLI process end to end, one thread: \`noiselint check . --format json${WORKERS ? ' --workers 1' : ''}\``, cli),
  ...(WORKERS ? [row('CLI process end to end, workers: `noiselint check . --format json`', cliWorkers)] : []),
  row('plain-parse script process end to end (`node bench/child.mjs plain`)', plainScript),
].join('\n')}

CLI end to end vs the plain-parse script end to end: **${ratio(cli, plainScript)}x** one thread${WORKERS ? `, ${ratio(cliWorkers, plainScript)}x with workers` : ''}.

Facts of the run: ${found} findings in the report summary (pairing findings included:
${JSON.stringify(last.command.summary)}), exit code ${last.command.code},
JSON report ${mb(last.command.outputBytes)} MB = ${(last.command.outputBytes / Math.max(1, found)).toFixed(0)} bytes per finding,
${last.ajv.invalid} files rejected by the schema, ${last.plain.failed} plain-parse failures, ${last.located.problems} located-parse problems.
Spread (min-max ms): ${spread}.

The summary's ratios are paired: the median over passes of each pass's own ratio (command / plain
parse per pass: ${pairs('command', 'plain')}; command / ajv: ${pairs('command', 'ajv')}${WORKERS ? `; workers / ajv: ${pairs('workers', 'ajv')}` : ''}).
`);
  log(
    `(a) paired: command/plain ${paired('command', 'plain').toFixed(2)}x, command/ajv ${paired('command', 'ajv').toFixed(2)}x${WORKERS ? `, workers/ajv ${paired('workers', 'ajv').toFixed(2)}x` : ''}`,
  );
  log(
    `(a) plain ${ms(m.plain)} ms, ajv ${ms(m.ajv)}, command ${ms(m.command)} (${ratio(m.command, m.plain)}x plain, ${ratio(m.command, m.ajv)}x ajv), workers ${ms(m.workers ?? NaN)}`,
  );
}

// ---------------------------------------------------------------- (e) monorepo corpus
if (only.has('e')) {
  const dir = join(root, 'bench', 'monorepo');
  log(`(e) writing a monorepo of ${FILES} files to bench/monorepo ...`);
  const { files, mix } = H.writeMonorepo(dir, FILES);
  const bytes = files.reduce((n, f) => n + readFileSync(f.path).length, 0);
  const { m, last, spread, paired, pairs } = await corpusRuns(dir, {
    plain: () => H.plainParse(dir),
    ajv: () => validateDir(dir),
    command: () => H.checkCommand(dir, WORKERS ? ['--workers', '1'] : []),
  });
  const n = last.plain.files;
  summary.push([
    'e',
    `monorepo (${n} files, ${((100 * mix.diffusion) / n).toFixed(0)}% diffusion configs) vs ajv`,
    `${paired('command', 'ajv').toFixed(2)}x`,
    '<= 0.3x',
    verdict(paired('command', 'ajv'), 0.3),
  ]);
  const row = (label, t) => `| ${label} | ${ms(t)} | ${perFile(t, n)} | ${ratio(t, m.plain)}x | ${ratio(t, m.ajv)}x |`;
  sections.push(`## (e) \`check\` over a monorepo-like tree

Tree: ${n} files (test/load/corpus.ts \`writeMonorepo\`), ${mb(bytes)} MB: ${mix.diffusion} diffusion training and
sampling configs among ${mix.other} others (service manifests with two documents each, package
manifests, CI workflows, compose files, configs of non-diffusion models with optimizer \`betas\`).
Median of ${REPS} interleaved passes after one warm-up pass.

| measurement | median ms | per file µs | vs plain parse | vs ajv |
|---|---:|---:|---:|---:|
${row('plain parse (baseline)', m.plain)}
${row('ajv validation', m.ajv)}
${row('**whole `check` command**, one thread', m.command)}

Facts: ${H.findingsIn(last.command.summary)} findings (${JSON.stringify(last.command.summary)}). Spread: ${spread}.
The summary's ratio is paired (median of each pass's command / ajv: ${pairs('command', 'ajv')}).
`);
  log(`(e) plain ${ms(m.plain)} ms, ajv ${ms(m.ajv)} ms, command ${ms(m.command)} ms (${ratio(m.command, m.ajv)}x ajv)`);
}

// ---------------------------------------------------------------- (f) peak memory of the CLI
if (only.has('f')) {
  log('(f) peak RSS of the CLI at growing corpus sizes ...');
  const timeBin = '/usr/bin/time';
  const peakKb = (args, cwd) => {
    const out = join(outDir, 'maxrss.txt');
    const r = spawnSync(timeBin, ['-f', '%M', '-o', out, process.execPath, ...args], { cwd, stdio: ['ignore', 'ignore', 'pipe'], encoding: 'utf8' });
    if (r.error) throw r.error;
    if (r.status !== 0 && r.status !== 1) throw new Error(`${args.join(' ')} failed (${r.status}): ${r.stderr.slice(0, 500)}`);
    return Number(readFileSync(out, 'utf8').trim().split('\n').pop());
  };
  const rows = [];
  for (const base of [1000, 10000, 50000]) {
    const count = Math.max(100, Math.round(base * SCALE));
    const dir = join(root, 'bench', 'corpus-rss');
    H.writeCorpus(dir, count);
    const cliKb = peakKb([CLI, 'check', '.', '--format', 'json', ...(WORKERS ? ['--workers', '1'] : [])], dir);
    const workersKb = WORKERS ? peakKb([CLI, 'check', '.', '--format', 'json'], dir) : NaN;
    const plainKb = peakKb([join(root, 'bench/child.mjs'), 'plain', dir], dir);
    rows.push({ count, cliKb, workersKb, plainKb });
    log(
      `  ${count} files: CLI ${(cliKb / 1024).toFixed(0)} MB, with workers ${(workersKb / 1024).toFixed(0)} MB, plain-parse script ${(plainKb / 1024).toFixed(0)} MB`,
    );
  }
  const largest = rows[rows.length - 1];
  const smallest = rows[0];
  summary.push([
    'f',
    `peak RSS of the CLI at ${largest.count} files (one thread)`,
    `${(largest.cliKb / 1024).toFixed(0)} MB (${(smallest.cliKb / 1024).toFixed(0)} MB at ${smallest.count})`,
    '<= 300 MB, flat',
    verdict(largest.cliKb / 1024, 300),
  ]);
  sections.push(`## (f) Peak memory of the CLI

Maximum resident set size (\`/usr/bin/time -f %M\`) of \`noiselint check . --format json\` (report
written to /dev/null) on corpora of growing size, beside the plain-parse script on the same files.

| files | CLI, one thread MB | CLI, workers MB | plain-parse script MB | CLI / script |
|---:|---:|---:|---:|---:|
${rows.map((r) => `| ${r.count} | ${(r.cliKb / 1024).toFixed(0)} | ${WORKERS ? (r.workersKb / 1024).toFixed(0) : '-'} | ${(r.plainKb / 1024).toFixed(0)} | ${ratio(r.cliKb, r.plainKb)}x |`).join('\n')}
`);
}

/** CPU time (user + system) of a process so far, in ms (Linux /proc; ticks of 1/100 s). */
function cpuMs(pid) {
  const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
  const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
  return (Number(fields[11]) + Number(fields[12])) * 10;
}

// ---------------------------------------------------------------- (b) LSP latency
if (only.has('b')) {
  log('(b) LSP didChange -> diagnostics latency ...');
  const dir = join(root, 'build', 'bench', 'lsp');
  mkdirSync(dir, { recursive: true });
  const client = await H.LspTestClient.start({ cwd: dir, settings: { debounceMs: 0 } });
  const rows = [];
  const floor = [];
  let floorCpu = 0;
  try {
    // IPC floor: a trivial request round trip (summary of an unknown document), its latency and
    // the server's CPU time for it (reading, decoding and answering one message).
    const floorTrips = 1000;
    const floorCpu0 = cpuMs(client.proc.pid);
    for (let i = 0; i < floorTrips; i++) {
      const t0 = performance.now();
      await client.connection.sendRequest('noiselint/summary', { uri: 'file:///nowhere.yaml' }).catch(() => null);
      floor.push(performance.now() - t0);
    }
    floorCpu = (cpuMs(client.proc.pid) - floorCpu0) / floorTrips;
    for (const lines of [50, 500, 5000]) {
      const uri = `file://${join(dir, `doc-${lines}.yaml`)}`;
      const samples = lines >= 5000 ? 60 : 200;
      // An editor's server is warm after a few seconds of typing: these first changes are not measured.
      const warmUp = lines >= 5000 ? 20 : 60;
      const texts = Array.from({ length: warmUp + samples }, (_, i) => H.configText(i + 1, i + 1, lines));
      client.open(uri, H.configText(0, 0, lines));
      await client.settled(uri, 1);
      for (let k = 1; k <= warmUp; k++) {
        client.change(uri, k + 1, texts[k - 1]);
        await client.waitFor(uri, (x) => x.version === k + 1);
      }
      const lat = [];
      const cpu0 = cpuMs(client.proc.pid);
      for (let k = warmUp + 1; k <= warmUp + samples; k++) {
        const text = texts[k - 1];
        const v = k + 1;
        const t0 = performance.now();
        client.change(uri, v, text);
        const p = await client.waitFor(uri, (x) => x.version === v);
        lat.push(p.at - t0);
      }
      const busy = (cpuMs(client.proc.pid) - cpu0) / samples;
      const sample = H.configText(7, 7, lines);
      const parse = H.parseTimes(sample, 'yaml', Math.max(30, Math.floor(samples / 2)));
      const analyze = H.analyzeTimes(sample, join(dir, `doc-${lines}.yaml`), Math.max(30, Math.floor(samples / 2)));
      rows.push({
        lines,
        bytes: sample.length,
        samples,
        p50: median(lat),
        p99: quantile(lat, 0.99),
        parse50: median(parse),
        parse99: quantile(parse, 0.99),
        analyze50: median(analyze),
        analyzeCpu: H.analyzeSequenceCpuMs(texts.slice(0, warmUp), texts.slice(warmUp), join(dir, `doc-${lines}.yaml`)),
        busy,
      });
      client.close(uri);
    }
  } finally {
    await client.stop();
  }
  const f50 = median(floor);
  for (const r of rows) {
    summary.push([
      'b',
      `LSP server busy time per change vs \`analyzeText\`, ${r.lines}-line file`,
      `${ratio(r.busy, r.analyzeCpu)}x (${ms(r.busy)} ms vs ${ms(r.analyzeCpu)} ms CPU; ${ratio(Math.max(0, r.busy - floorCpu), r.analyzeCpu)}x above the stdio floor of ${ms(floorCpu)} ms)`,
      '<= 1.3x',
      verdict(r.busy / r.analyzeCpu, 1.3),
    ]);
  }
  sections.push(`## (b) LSP didChange -> publishDiagnostics latency

The real server over stdio (\`noiselint lsp --stdio\`), driven by the test client (test/load/lspClient.ts)
with \`debounceMs: 0\` so that the figure is processing time, not the editor's quiet period (the
default debounce of 150 ms is added on top in an editor, by design). One change at a time: full
text sent, then wait for the diagnostics of that version. **Busy time** is the server process's
CPU time (user + system, /proc/<pid>/stat, 10 ms ticks summed over all changes) divided by the
number of changes: what the server spends per change, without the time a message waits in a pipe.
The first changes (60, or 20 for the 5000-line file) warm the server up and are not counted. It is
compared with the CPU time of \`analyzeText\` over the same texts in the same order, after the same
warm-up, in the benchmark process (process.cpuUsage), so that waiting for a core counts on
neither side and both see the same caches. Parse-only
is our located parse. The stdio round-trip floor is reported on its own, since absolute latency on
a shared machine is noise: a trivial request round trip takes p50 ${ms(f50)} ms, p99 ${ms(quantile(floor, 0.99))} ms,
and costs the server ${ms(floorCpu)} ms of CPU (over ${floor.length} round trips): the part of every change's busy time that
reading and answering one message over stdio takes, whatever the analysis.

| lines | KB | samples | busy ms per change | analyzeText CPU ms | busy / analyzeText | latency p50 ms | latency p99 ms | parse-only p50 ms | p50 latency / floor p50 |
|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|
${rows.map((r) => `| ${r.lines} | ${(r.bytes / 1024).toFixed(1)} | ${r.samples} | ${ms(r.busy)} | ${ms(r.analyzeCpu)} | **${ratio(r.busy, r.analyzeCpu)}x** | ${ms(r.p50)} | ${ms(r.p99)} | ${ms(r.parse50)} | ${ratio(r.p50, f50)}x |`).join('\n')}
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
