/** `noiselint lsp --stdio`: runs the language server on stdin/stdout (or `--node-ipc` under Node IPC). */
import { UsageError, type CliIO } from '../io';
import { runLanguageServer } from '../../lsp';

const USAGE = 'usage: noiselint lsp --stdio (or --node-ipc)';

export async function runLsp(args: string[], io: CliIO): Promise<number> {
  let transport: 'stdio' | 'node-ipc' | null = null;
  for (let i = 0; i < args.length; i++) {
    const arg = args[i];
    if (arg === '--stdio' || arg === '--node-ipc') {
      const kind = arg === '--stdio' ? 'stdio' : 'node-ipc';
      if (transport && transport !== kind) return fail(io, 'choose one transport: --stdio or --node-ipc');
      transport = kind;
    } else if (arg.startsWith('--clientProcessId=')) {
      // Passed by some clients so the server can exit with its editor; the connection reads it.
    } else if (arg === '--clientProcessId') {
      i++;
    } else if (arg === '--help' || arg === '-h') {
      io.stdout(`${USAGE}\n`);
      return 0;
    } else if (arg.startsWith('--socket') || arg.startsWith('--pipe')) {
      return fail(io, `${arg.split('=')[0]} is not supported; ${USAGE}`);
    } else {
      return fail(io, `unknown argument "${arg}"; ${USAGE}`);
    }
  }
  if (!transport) return fail(io, `name a transport; ${USAGE}`);
  if (transport === 'node-ipc' && typeof process.send !== 'function') {
    return fail(io, '--node-ipc needs a parent process with an IPC channel; use --stdio');
  }
  runLanguageServer();
  return 0;
}

/** One line on stderr and exit code 2 (the entry leaves the exit code of `lsp` to this command). */
function fail(io: CliIO, message: string): number {
  io.stderr(`noiselint lsp: ${message}\n`);
  process.exitCode = 2;
  return 2;
}

export { UsageError };
