import type { CliIO } from '../io';

/** (Being written.) */
export async function runLsp(_args: string[], io: CliIO): Promise<number> {
  io.stderr('noiselint lsp: not available yet\n');
  return 2;
}
