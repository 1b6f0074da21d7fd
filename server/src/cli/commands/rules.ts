import type { CliIO } from '../io';

/** (Being written.) */
export async function runRulesCommand(_args: string[], io: CliIO): Promise<number> {
  io.stderr('noiselint rules: not available yet\n');
  return 2;
}
