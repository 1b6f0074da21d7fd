import type { CliIO } from '../io';

/** (Being written.) */
export async function runCheck(_args: string[], io: CliIO): Promise<number> {
  io.stderr('noiselint check: not available yet\n');
  return 2;
}
