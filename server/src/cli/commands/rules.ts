/** `noiselint rules [id]`: the rule list, or one rule's documentation. */
import { ruleDocs } from '../../rules/docs';
import { ALL_RULE_METAS, getRuleMeta } from '../../rules';
import { repairLabel } from '../../rules/docs';
import type { RuleMeta } from '../../rules/types';
import { UsageError, type CliIO } from '../io';
import { helpText, parseCommandArgs, type CommandSpec } from '../options';

export const RULES_SPEC: CommandSpec = {
  name: 'rules',
  summary: "Lists the rules, or prints one rule's documentation.",
  usage: '[rule-id]',
  options: [],
  exitCodes: [
    [0, 'printed'],
    [2, 'an unknown rule id, or bad arguments'],
  ],
  examples: ['noiselint rules', 'noiselint rules terminal-snr-leak'],
};

function table(metas: readonly RuleMeta[]): string {
  const rows = metas.map((m) => [m.id, m.defaultSeverity, repairLabel(m), m.summary]);
  const head = ['rule', 'default', 'repair', 'what it finds'];
  const widths = [0, 1, 2].map((i) => Math.max(head[i]!.length, ...rows.map((r) => r[i]!.length)));
  const line = (r: string[]) =>
    `${r
      .slice(0, 3)
      .map((c, i) => c.padEnd(widths[i]!))
      .join('  ')}  ${r[3]}`.trimEnd();
  return [line(head), ...rows.map(line)].join('\n') + '\n';
}

/** One rule's page: a short header and its documentation. */
export function ruleText(meta: RuleMeta): string {
  const header = `${meta.id}: ${meta.summary}\ndefault severity: ${meta.defaultSeverity}; repair: ${repairLabel(meta)}\n`;
  return `${header}${ruleDocs(meta).replace(/^\n+/, '\n').trimEnd()}\n`;
}

export async function runRulesCommand(args: string[], io: CliIO): Promise<number> {
  const parsed = parseCommandArgs(RULES_SPEC, args);
  if (parsed.help) {
    io.stdout(helpText(RULES_SPEC));
    return 0;
  }
  const positional = parsed.positionals;
  if (positional.length > 1) throw new UsageError('give at most one rule id (usage: noiselint rules [rule-id])');
  if (positional.length === 0) {
    io.stdout(table(ALL_RULE_METAS));
    return 0;
  }
  const meta = getRuleMeta(positional[0]!);
  if (!meta) {
    io.stderr(`noiselint rules: unknown rule "${positional[0]}" (run \`noiselint rules\` for the list)\n`);
    return 2;
  }
  io.stdout(ruleText(meta));
  return 0;
}
