/** `noiselint <command>`: dispatches to the commands; every failure is one line, exit code 2. */
import { UsageError, type CliIO, type Command } from './io';
import { EXPLAIN_SPEC, runExplain } from './commands/explain';
import { CHECK_SPEC, runCheck } from './commands/check';
import { FIX_SPEC, runFix } from './commands/fix';
import { RULES_SPEC, runRulesCommand } from './commands/rules';
import { LSP_SPEC, runLsp } from './commands/lsp';
import { RESCALE_RUN_SPEC, runRescaleRun } from './commands/rescaleRun';
import { editDistance } from '../fields/normalize';
import { helpText, type CommandSpec } from './options';

import { VERSION } from '../base/version';

const COMMANDS: Record<string, { run: Command; spec: CommandSpec }> = {
  check: { run: runCheck, spec: CHECK_SPEC },
  fix: { run: runFix, spec: FIX_SPEC },
  explain: { run: runExplain, spec: EXPLAIN_SPEC },
  'rescale-run': { run: runRescaleRun, spec: RESCALE_RUN_SPEC },
  rules: { run: runRulesCommand, spec: RULES_SPEC },
  lsp: { run: runLsp, spec: LSP_SPEC },
};

function usage(): string {
  const width = Math.max(...Object.keys(COMMANDS).map((n) => n.length));
  const rows = Object.values(COMMANDS).map(({ spec }) => `  noiselint ${spec.name.padEnd(width)}  ${spec.summary}`);
  return [
    `noiselint ${VERSION}: finds noise-schedule mistakes in diffusion configs`,
    '',
    'Usage: noiselint <command> [options]',
    '',
    'Commands:',
    ...rows,
    '',
    '`noiselint <command> --help` (or `noiselint help <command>`) prints its options and exit codes.',
    '`noiselint --version` prints the version.',
    '',
  ].join('\n');
}

function closestCommand(name: string): string {
  let best = '';
  let bestDistance = Infinity;
  for (const c of Object.keys(COMMANDS)) {
    const d = editDistance(name.toLowerCase(), c);
    if (d < bestDistance) {
      best = c;
      bestDistance = d;
    }
  }
  return best;
}

export async function main(argv: string[], io: CliIO): Promise<number> {
  const [name, ...rest] = argv;
  if (!name || name === '--help' || name === '-h') {
    io.stdout(usage());
    return name ? 0 : 2;
  }
  if (name === 'help') {
    if (rest.length === 0) {
      io.stdout(usage());
      return 0;
    }
    const entry = COMMANDS[rest[0]!];
    if (!entry) {
      io.stderr(
        `noiselint help: unknown command "${rest[0]}"; the closest is ${closestCommand(rest[0]!)} (commands: ${Object.keys(COMMANDS).join(', ')})\n`,
      );
      return 2;
    }
    io.stdout(helpText(entry.spec));
    return 0;
  }
  if (name === '--version' || name === '-v') {
    io.stdout(`${VERSION}\n`);
    return 0;
  }
  const entry = COMMANDS[name];
  if (!entry) {
    const what = name.startsWith('-') ? 'option' : 'command';
    io.stderr(
      `noiselint: unknown ${what} "${name}"; the closest command is ${closestCommand(name)} (commands: ${Object.keys(COMMANDS).join(', ')}; noiselint --help)\n`,
    );
    return 2;
  }
  // `<command> --help` anywhere before `--`: the command's page, whatever else is on the line.
  const beforeDashes = rest.includes('--') ? rest.slice(0, rest.indexOf('--')) : rest;
  if (beforeDashes.includes('--help') || beforeDashes.includes('-h')) {
    io.stdout(helpText(entry.spec));
    return 0;
  }
  try {
    return await entry.run(rest, io);
  } catch (err) {
    const message = err instanceof Error ? err.message : String(err);
    io.stderr(`noiselint ${name}: ${message.split('\n')[0]}\n`);
    return 2;
  }
}

export { UsageError };
