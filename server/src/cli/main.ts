/** `noiselint <command>`: dispatches to the commands; every failure is one line, exit code 2. */
import { UsageError, type CliIO, type Command } from './io';
import { runExplain } from './commands/explain';
import { runCheck } from './commands/check';
import { runFix } from './commands/fix';
import { runRulesCommand } from './commands/rules';
import { runLsp } from './commands/lsp';
import { runRescaleRun } from './commands/rescaleRun';

import { VERSION } from '../base/version';

const USAGE = `noiselint ${VERSION}: finds noise-schedule mistakes in diffusion configs

Usage:
  noiselint check [paths|globs...] [--format text|json|sarif] [--show <severity>] [--budget <severity>=<N>...] [--fix-edits compact|full|none]
  noiselint fix [paths...] [--accept-retraining] [--accept-comment-edits] [--dry-run]
  noiselint explain <file...> [--format text|json]
  noiselint rescale-run <file...> [--sampling-only] [--write [--accept-retraining]]
  noiselint rules [id]
  noiselint lsp --stdio
`;

const COMMANDS: Record<string, Command> = {
  check: runCheck,
  fix: runFix,
  explain: runExplain,
  rules: runRulesCommand,
  lsp: runLsp,
  'rescale-run': runRescaleRun,
};

export async function main(argv: string[], io: CliIO): Promise<number> {
  const [name, ...rest] = argv;
  if (!name || name === '--help' || name === '-h' || name === 'help') {
    io.stdout(USAGE);
    return name ? 0 : 2;
  }
  if (name === '--version' || name === '-v') {
    io.stdout(`${VERSION}\n`);
    return 0;
  }
  const command = COMMANDS[name];
  if (!command) {
    io.stderr(`noiselint: unknown command "${name}" (try: check, fix, explain, rescale-run, rules, lsp)\n`);
    return 2;
  }
  try {
    return await command(rest, io);
  } catch (err) {
    const message = err instanceof Error ? err.message : String(err);
    io.stderr(`noiselint ${name}: ${message.split('\n')[0]}\n`);
    return 2;
  }
}

export { UsageError };
