import type { CliIO } from '../io';

export async function runExplain(_args: string[], io: CliIO): Promise<number> {
  io.stderr('noiselint explain: not available yet\n');
  return 2;
}
