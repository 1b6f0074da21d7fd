// `npm run demo`: runs the built CLI over the Lanternfish Pictures demo workspace (examples/).
// Findings are the point of the demo: a non-zero exit from `check` is printed and the demo goes on.
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const repo = join(dirname(fileURLToPath(import.meta.url)), '..');
const cli = join(repo, 'server', 'dist', 'noiselint.js');

if (!existsSync(cli)) {
  console.error('noiselint demo: server/dist/noiselint.js is missing; run `npm run build` first');
  process.exit(2);
}

const steps = [
  {
    title: 'Check the whole demo workspace',
    args: ['check', 'examples'],
  },
  {
    title: 'Explain the leaky night-storyboard fine-tune: the numbers behind the findings',
    args: ['explain', 'examples/night-storyboards/train-finetune.yaml'],
  },
  {
    title: 'Explain its preview sampler: which timesteps it visits',
    args: ['explain', 'examples/night-storyboards/sample-leading.yaml'],
  },
  {
    title: 'What the fixes would change (dry run, retraining and comment edits accepted; nothing is written)',
    args: ['fix', '--dry-run', '--accept-retraining', '--accept-comment-edits', 'examples'],
  },
];

let failed = false;
for (const step of steps) {
  const shown = `noiselint ${step.args.join(' ')}`;
  process.stdout.write(`\n=== ${step.title}\n$ ${shown}\n\n`);
  const run = spawnSync(process.execPath, [cli, ...step.args], { cwd: repo, stdio: 'inherit', env: process.env });
  if (run.error) {
    console.error(`noiselint demo: could not run ${shown}: ${run.error.message}`);
    failed = true;
    continue;
  }
  const code = run.status ?? 2;
  // check and fix --dry-run exit 1 when there are findings: expected here. 2 means a real failure.
  if (code === 1) process.stdout.write(`\n(exit code 1: findings reported, as expected for the demo files)\n`);
  else if (code !== 0) {
    process.stdout.write(`\n(exit code ${code}: this step failed)\n`);
    failed = true;
  }
}
process.exitCode = failed ? 1 : 0;
