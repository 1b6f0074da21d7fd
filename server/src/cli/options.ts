/**
 * Command-line options of every command, declared once: the parser (node:util parseArgs underneath)
 * and the `--help` page are built from the same table, so help cannot drift from what is accepted.
 * A wrong option is one line naming the closest known option; `--help` / `-h` anywhere before `--`
 * prints the command's page and exits 0.
 */
import { parseArgs } from 'node:util';
import { editDistance } from '../fields/normalize';
import { UsageError } from './io';

export interface OptionSpec {
  /** Long name without the dashes. */
  name: string;
  /** One letter, without the dash. */
  short?: string;
  type: 'boolean' | 'string';
  /** Placeholder of the value in help (`N`, `text|json`). */
  value?: string;
  /** Allowed values of a string option; anything else is refused with the list. */
  choices?: readonly string[];
  /** May be given more than once (the values are a list). */
  multiple?: boolean;
  description: string;
}

export interface CommandSpec {
  name: string;
  /** One line: what the command does. */
  summary: string;
  /** What follows `noiselint <name>` in the usage line, e.g. `[paths|globs...] [options]`. */
  usage: string;
  /** A few lines after the usage line (inputs, defaults). */
  details?: string[];
  options: OptionSpec[];
  exitCodes: [number, string][];
  examples?: string[];
}

export const HELP_OPTION: OptionSpec = { name: 'help', short: 'h', type: 'boolean', description: 'Print this help and exit 0.' };

export interface ParsedArgs {
  values: Record<string, string | boolean | string[] | undefined>;
  positionals: string[];
  /** `--help` or `-h` was given: print helpText(spec) and exit 0. */
  help: boolean;
}

function allOptions(spec: CommandSpec): OptionSpec[] {
  return [...spec.options, HELP_OPTION];
}

function flagOf(o: OptionSpec): string {
  return `--${o.name}`;
}

/** The known option nearest to `given` (prefixes first, then edit distance). */
export function closestOption(given: string, options: readonly OptionSpec[]): OptionSpec | undefined {
  const bare = given.replace(/^-+/, '').split('=')[0]!.toLowerCase();
  if (given.startsWith('-') && !given.startsWith('--') && bare.length === 1) {
    const byShort = options.find((o) => o.short?.toLowerCase() === bare);
    if (byShort) return byShort;
  }
  const prefixed = options.filter((o) => o.name.startsWith(bare) || (bare.length >= 3 && bare.startsWith(o.name)));
  if (prefixed.length === 1) return prefixed[0];
  let best: OptionSpec | undefined;
  let bestDistance = Infinity;
  for (const o of options) {
    const d = editDistance(bare, o.name.toLowerCase());
    if (d < bestDistance) {
      best = o;
      bestDistance = d;
    }
  }
  return best;
}

function describeUnknown(spec: CommandSpec, given: string): string {
  const near = closestOption(given, allOptions(spec));
  const hint = near ? `; the closest is ${near.short ? `-${near.short}, ` : ''}${flagOf(near)}` : '';
  return `unknown option ${given}${hint} (noiselint ${spec.name} --help lists them all)`;
}

function helpRequested(args: readonly string[]): boolean {
  for (const a of args) {
    if (a === '--') return false;
    if (a === '--help' || a === '-h') return true;
  }
  return false;
}

/** Parses `args` for `spec`. Throws UsageError with one line for anything it does not accept. */
export function parseCommandArgs(spec: CommandSpec, args: string[]): ParsedArgs {
  if (helpRequested(args)) return { values: {}, positionals: [], help: true };
  const options: Record<string, { type: 'boolean' | 'string'; short?: string; multiple?: boolean }> = {};
  for (const o of allOptions(spec)) {
    options[o.name] = { type: o.type, ...(o.short ? { short: o.short } : {}), ...(o.multiple ? { multiple: true } : {}) };
  }
  let parsed;
  try {
    parsed = parseArgs({ args, options, allowPositionals: true, strict: true });
  } catch (err) {
    const e = err as { code?: string; message?: string };
    const message = e.message ?? String(err);
    if (e.code === 'ERR_PARSE_ARGS_UNKNOWN_OPTION') {
      const given = /'([^']+)'/.exec(message)?.[1] ?? message;
      throw new UsageError(describeUnknown(spec, given));
    }
    if (e.code === 'ERR_PARSE_ARGS_INVALID_OPTION_VALUE') {
      const name = /--([a-z0-9-]+)/i.exec(message)?.[1];
      const o = allOptions(spec).find((x) => x.name === name);
      if (o?.type === 'string') throw new UsageError(`--${o.name} needs a value${o.value ? ` (${o.value})` : ''}`);
      if (o) throw new UsageError(`--${o.name} takes no value`);
    }
    throw new UsageError(message.split('\n')[0]);
  }
  const values = parsed.values as Record<string, string | boolean | string[] | undefined>;
  for (const o of spec.options) {
    const v = values[o.name];
    if (o.choices && typeof v === 'string' && !o.choices.includes(v)) {
      throw new UsageError(`--${o.name} must be ${listWords(o.choices)}, not "${v}"`);
    }
  }
  return { values, positionals: parsed.positionals, help: false };
}

function listWords(words: readonly string[]): string {
  if (words.length <= 1) return words.join('');
  return `${words.slice(0, -1).join(', ')} or ${words[words.length - 1]}`;
}

/** The `--help` page of a command. */
export function helpText(spec: CommandSpec): string {
  const lines = [`Usage: noiselint ${spec.name} ${spec.usage}`.trimEnd(), '', spec.summary];
  if (spec.details?.length) lines.push('', ...spec.details);
  const rows = allOptions(spec).map((o) => {
    const flag = `${o.short ? `-${o.short}, ` : '    '}--${o.name}${o.type === 'string' ? ` <${o.value ?? 'value'}>` : ''}`;
    return [flag, o.description] as const;
  });
  const width = Math.min(34, Math.max(...rows.map((r) => r[0].length)));
  lines.push('', 'Options:');
  for (const [flag, text] of rows) {
    lines.push(flag.length > width ? `  ${flag}\n  ${' '.repeat(width)}  ${text}` : `  ${flag.padEnd(width)}  ${text}`);
  }
  lines.push('', 'Exit codes:');
  for (const [code, meaning] of spec.exitCodes) lines.push(`  ${code}  ${meaning}`);
  if (spec.examples?.length) lines.push('', 'Examples:', ...spec.examples.map((e) => `  ${e}`));
  return `${lines.join('\n')}\n`;
}
