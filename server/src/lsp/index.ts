/** The language server: `startServer(connection)`; `runLanguageServer()` for `noiselint lsp`. */
import { format } from 'node:util';
import { createConnection } from 'vscode-languageserver/node';
import { startServer } from './server';
import { createStdioTransport } from './transport';

export { startServer, NoiselintServer } from './server';

/**
 * Starts the server on the transport named in process.argv (`--stdio` or `--node-ipc`).
 * Errors escaping a handler are logged and never end the process.
 */
export function runLanguageServer(): void {
  // On stdio, our own framing: bounded output, resynchronising input, InvalidRequest after shutdown.
  const stdio = process.argv.includes('--stdio');
  const transport = stdio ? createStdioTransport(process.stdin, process.stdout) : null;
  const connection = transport ? createConnection(transport.reader, transport.writer) : createConnection();
  if (transport) {
    // What the library does for its own stdio streams: stdout is the protocol, console goes to
    // stderr, and the end of the input ends the process.
    for (const level of ['log', 'info', 'warn', 'error', 'debug'] as const) {
      console[level] = (...args: unknown[]) => void process.stderr.write(`${format(...args)}\n`);
    }
    transport.reader.onClose(() => process.exit(transport.shutDownSeen() ? 0 : 1));
  }
  process.on('uncaughtException', (err) => {
    connection.console.error(`noiselint: unexpected error: ${err instanceof Error ? (err.stack ?? err.message) : String(err)}`);
  });
  process.on('unhandledRejection', (reason) => {
    connection.console.error(`noiselint: unhandled rejection: ${reason instanceof Error ? (reason.stack ?? reason.message) : String(reason)}`);
  });
  startServer(connection);
}
