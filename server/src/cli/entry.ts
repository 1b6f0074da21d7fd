/** Process entry of the bundled CLI (server/dist/noiselint.js). */
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { setFlagsFromString } from 'node:v8';
import { main } from './main';
import type { CliIO } from './io';

// A check or fix run makes garbage at a steady rate and keeps little of it (the report is
// streamed, a fixed file's tree goes before the next is read): growing the heap in smaller steps
// keeps its memory flat in the number of files and near the size of one file's tree, as the
// language server does (lsp/server.ts, SERVER_HEAP_GROWING_PERCENT).
if (process.argv[2] === 'check' || process.argv[2] === 'fix') setFlagsFromString('--heap-growing-percent=30');

// A closed pipe (`noiselint check | head`) ends the run quietly instead of with a stack trace.
for (const stream of [process.stdout, process.stderr]) {
  stream.on('error', (err: NodeJS.ErrnoException) => {
    if (err.code === 'EPIPE') process.exit(process.exitCode ?? 0);
    throw err;
  });
}

const io: CliIO = {
  cwd: process.cwd(),
  stdout: (t) => void process.stdout.write(t),
  stderr: (t) => void process.stderr.write(t),
  isTTY: !!process.stdout.isTTY,
  stderrIsTTY: !!process.stderr.isTTY,
  env: process.env,
  readStdin: async () => {
    const chunks: Buffer[] = [];
    for await (const chunk of process.stdin) chunks.push(chunk as Buffer);
    return Buffer.concat(chunks);
  },
};
// Built beside this bundle by scripts/build.mjs; without it `check` runs in one thread.
const workerScript = join(__dirname, 'checkWorker.js');
if (existsSync(workerScript)) io.workerScript = workerScript;

main(process.argv.slice(2), io).then(
  (code) => {
    // The language server keeps the process alive; every other command ends with its exit code.
    if (process.argv[2] !== 'lsp') process.exitCode = code;
  },
  (err: unknown) => {
    process.stderr.write(`noiselint: ${err instanceof Error ? err.message : String(err)}\n`);
    process.exitCode = 2;
  },
);
