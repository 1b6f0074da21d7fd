/** The language server: `startServer(connection)`; `runLanguageServer()` for `noiselint lsp`. */
import { createConnection } from 'vscode-languageserver/node';
import { startServer } from './server';

export { startServer, NoiselintServer } from './server';

/**
 * Starts the server on the transport named in process.argv (`--stdio` or `--node-ipc`).
 * Errors escaping a handler are logged and never end the process.
 */
export function runLanguageServer(): void {
  const connection = createConnection();
  process.on('uncaughtException', (err) => {
    connection.console.error(`noiselint: unexpected error: ${err instanceof Error ? (err.stack ?? err.message) : String(err)}`);
  });
  process.on('unhandledRejection', (reason) => {
    connection.console.error(`noiselint: unhandled rejection: ${reason instanceof Error ? (reason.stack ?? reason.message) : String(reason)}`);
  });
  startServer(connection);
}
