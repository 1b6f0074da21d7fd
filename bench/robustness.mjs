#!/usr/bin/env node
// Robustness benchmark (`node bench/robustness.mjs`, also run at the end of `npm run bench`):
// peak RSS of `check` and `fix --dry-run` per MB of input for one large YAML file, and time
// against documents per file (1,000 vs 10,000 documents: about 10x is linear). Ratios only,
// measured in this run; peak RSS comes from the child's own resource usage.
//   NOISELINT_BENCH_SCALE=0.1 scales the inputs down; --no-write leaves bench/RESULTS.md alone
//   (by default its "## Robustness" section is replaced, or appended after what run.mjs wrote).
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const cli = join(root, 'server/dist/noiselint.js');
const SCALE = Number(process.env.NOISELINT_BENCH_SCALE ?? '1') || 1;
const dir = mkdtempSync(join(tmpdir(), 'noiselint-robustness-'));

/** Runs the CLI in a child that reports its own peak RSS (bytes) and wall time. */
function measure(args) {
  const probe = `const t=performance.now();process.on('exit',()=>{process.stderr.write('\\nBENCH '+JSON.stringify({rss:process.resourceUsage().maxRSS*1024,ms:performance.now()-t})+'\\n')});process.argv=[process.argv[0],${JSON.stringify(cli)},...${JSON.stringify(args)}];require(${JSON.stringify(cli)});`;
  const r = spawnSync(process.execPath, ['--max-old-space-size=4096', '-e', probe], { cwd: dir, encoding: 'utf8', maxBuffer: 512 * 1024 * 1024 });
  const m = /BENCH (\{.*\})/.exec(r.stderr ?? '');
  if (!m) throw new Error(`no measurement from ${args.join(' ')}: ${String(r.stderr).slice(-500)}`);
  return JSON.parse(m[1]);
}

// (1) One YAML file of many small entries (invented Lanternfish Pictures data).
const entries = Math.round(200_000 * SCALE);
const lines = [
  '# Lanternfish Pictures: sweep of night storyboard runs (invented demo data)',
  'num_train_timesteps: 1000',
  'beta_schedule: scaled_linear',
  'timestep_spacing: leading',
  'num_inference_steps: 30',
  'runs:',
];
for (let i = 0; i < entries; i++) lines.push(`  run_${i}: ${(i % 997) / 1000}`);
const big = `${lines.join('\n')}\n`;
writeFileSync(join(dir, 'sweep.yaml'), big);
const mb = Buffer.byteLength(big) / (1024 * 1024);
const baseline = measure(['--version']);
const check = measure(['check', 'sweep.yaml']);
const fix = measure(['fix', '--dry-run', 'sweep.yaml']);
const perMb = (r) => (r.rss - baseline.rss) / (mb * 1024 * 1024);

// (2) Documents per file: the same document 1,000 and 10,000 times.
const doc =
  'num_train_timesteps: 1000\nbeta_schedule: scaled_linear\nbeta_start: 0.00085\nbeta_end: 0.012\nprediction_type: epsilon\ntimestep_spacing: leading\nnum_inference_steps: 30\n';
const small = Math.max(100, Math.round(1000 * SCALE));
writeFileSync(join(dir, 'few.yaml'), Array(small).fill(doc).join('---\n'));
writeFileSync(
  join(dir, 'many.yaml'),
  Array(small * 10)
    .fill(doc)
    .join('---\n'),
);
const few = measure(['fix', '--dry-run', 'few.yaml']);
const many = measure(['fix', '--dry-run', 'many.yaml']);

const checkPerMb = perMb(check);
const fixPerMb = perMb(fix);
const scaling = many.ms / few.ms;
const verdict = (ok) => (ok ? 'met' : '**missed**');
const section = [
  '## Robustness',
  '',
  'Written by `node bench/robustness.mjs` (the last step of `npm run bench`): one large YAML file and',
  `one file of many documents (invented Lanternfish Pictures data), each CLI run in its own child process.`,
  '',
  '| measure | value | target | |',
  '|---|---:|---|---|',
  `| input: YAML with ${entries} entries | ${mb.toFixed(2)} MB | | |`,
  `| check: peak RSS above a bare start, per MB of input | ${checkPerMb.toFixed(1)}x | about 40x | ${verdict(checkPerMb <= 44)} |`,
  `| fix --dry-run: peak RSS above a bare start, per MB of input | ${fixPerMb.toFixed(1)}x | about 40x | ${verdict(fixPerMb <= 44)} |`,
  `| fix --dry-run time, ${small * 10} vs ${small} documents in one file | ${scaling.toFixed(1)}x | about 10x (linear) or less | ${verdict(scaling <= 12)} |`,
  `| fix --dry-run peak RSS, ${small * 10} vs ${small} documents | ${(many.rss / few.rss).toFixed(1)}x | | |`,
  '',
].join('\n');
console.log(section);
rmSync(dir, { recursive: true, force: true });
if (!process.argv.includes('--no-write')) {
  const results = join(root, 'bench/RESULTS.md');
  const before = existsSync(results) ? readFileSync(results, 'utf8') : '# Benchmark results\n';
  const at = before.indexOf('\n## Robustness\n');
  const kept = (at === -1 ? before : before.slice(0, at + 1)).replace(/\n*$/, '\n');
  // Whatever followed the old section (a later "## " heading) stays after the new one.
  const rest =
    at === -1
      ? ''
      : before
          .slice(at + 1)
          .replace(/^## Robustness\n[\s\S]*?(?=\n## |$)/, '')
          .replace(/^\n+/, '');
  writeFileSync(results, `${kept}\n${section}${rest ? `\n${rest}` : ''}`);
}
