import type { CliIO } from '../io';

/** (Being written.) */
export async function runFix(_args: string[], io: CliIO): Promise<number> {
  io.stderr('noiselint fix: not available yet\n');
  return 2;
}
