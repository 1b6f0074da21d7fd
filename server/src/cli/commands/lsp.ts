/** `noiselint lsp --stdio`: runs the language server on stdin/stdout (or `--node-ipc` under Node IPC). */
import { UsageError, type CliIO } from '../io';
import { helpText, parseCommandArgs, type CommandSpec } from '../options';
import { runLanguageServer } from '../../lsp';

export const LSP_SPEC: CommandSpec = {
  name: 'lsp',
  summary: 'Runs the language server (Language Server Protocol) for any editor.',
  usage: '--stdio | --node-ipc',
  details: [
    'Settings arrive under the `noiselint` section: through workspace/configuration, the',
    'initializationOptions of initialize, or workspace/didChangeConfiguration.',
  ],
  options: [
    { name: 'stdio', type: 'boolean', description: 'Speak LSP on standard input and output.' },
    { name: 'node-ipc', type: 'boolean', description: 'Speak LSP over the Node IPC channel of a parent process.' },
    { name: 'clientProcessId', type: 'string', value: 'pid', description: "The editor's process id: the server exits with it." },
  ],
  exitCodes: [
    [0, 'the client asked the server to shut down and exit'],
    [1, 'the client exited without asking the server to shut down'],
    [2, 'bad arguments'],
  ],
  examples: ['noiselint lsp --stdio'],
};

const USAGE = 'usage: noiselint lsp --stdio (or --node-ipc)';

export async function runLsp(args: string[], io: CliIO): Promise<number> {
  const socket = args.find((a) => a.startsWith('--socket') || a.startsWith('--pipe'));
  if (socket) return fail(io, `${socket.split('=')[0]} is not supported; ${USAGE}`);
  let parsed;
  try {
    parsed = parseCommandArgs(LSP_SPEC, args);
  } catch (err) {
    return fail(io, err instanceof Error ? err.message : String(err));
  }
  if (parsed.help) {
    io.stdout(helpText(LSP_SPEC));
    return 0;
  }
  if (parsed.positionals.length) return fail(io, `unknown argument "${parsed.positionals[0]}"; ${USAGE}`);
  const stdio = parsed.values.stdio === true;
  const ipc = parsed.values['node-ipc'] === true;
  if (stdio && ipc) return fail(io, 'choose one transport: --stdio or --node-ipc');
  if (!stdio && !ipc) return fail(io, `name a transport; ${USAGE}`);
  if (ipc && typeof process.send !== 'function') {
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
