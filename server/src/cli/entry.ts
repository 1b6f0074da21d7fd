/** Process entry of the bundled CLI (server/dist/noiselint.js). */
import { main } from './main';
import type { CliIO } from './io';

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
