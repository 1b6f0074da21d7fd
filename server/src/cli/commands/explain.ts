/** `noiselint explain <file...|-> [options]`: options and exit codes in EXPLAIN_SPEC (`--help`). */
import { closeSync, fsyncSync, openSync, renameSync, rmSync, writeSync } from 'node:fs';
import { basename, dirname, join, resolve, relative } from 'node:path';
import { readFile } from '../../engine/api';
import { explainJson, formatExplainText } from '../../views/explainFormat';
import { decodeText, nodeFs, readTextFile } from '../../workspace/fs';
import { UsageError, type CliIO } from '../io';
import { printable, printableLine } from '../output/printable';
import { helpText, parseCommandArgs, type CommandSpec } from '../options';
import { loadProject } from '../../workspace/projectFile';
import { WorkspaceSession } from '../../workspace/session';
import { plotDataFor } from '../../views/plotData';
import { plotSvg } from '../../views/plotSvg';
import { STDIN_NAME } from './check';

const EXPLAIN_FORMATS = ['text', 'json'] as const;

export const EXPLAIN_SPEC: CommandSpec = {
  name: 'explain',
  summary: 'Prints what a config resolves to: the setup, terminal SNR, the sampled timesteps and the SNR at each.',
  usage: '<file...|-> [options]',
  details: ['`-` reads one config from standard input; --as <path> names it (project file, pairing, file type).'],
  options: [
    {
      name: 'format',
      short: 'f',
      type: 'string',
      value: 'text|json',
      choices: EXPLAIN_FORMATS,
      description: 'Output format (default text; json: docs/explain-json.md).',
    },
    { name: 'plot-svg', type: 'string', value: 'out.svg', description: 'Also write the schedule plot of the (one) file as a standalone SVG.' },
    { name: 'as', type: 'string', value: 'path', description: 'With `-`: the path the text on standard input stands for.' },
  ],
  exitCodes: [
    [0, 'every file was explained'],
    [2, 'bad arguments, a file that could not be read, or a plot that could not be written'],
  ],
  examples: [
    'noiselint explain configs/train.yaml',
    'noiselint explain -f json configs/*.yaml',
    'noiselint explain configs/train.yaml --plot-svg plot.svg',
  ],
};

export async function runExplain(args: string[], io: CliIO): Promise<number> {
  const parsed = parseCommandArgs(EXPLAIN_SPEC, args);
  if (parsed.help) {
    io.stdout(helpText(EXPLAIN_SPEC));
    return 0;
  }
  const format = (parsed.values.format as 'text' | 'json' | undefined) ?? 'text';
  const stdinName = typeof parsed.values.as === 'string' ? parsed.values.as : undefined;
  if (parsed.positionals.length === 0) throw new UsageError('name at least one file: noiselint explain <file...>');
  if (parsed.positionals.filter((p) => p === '-').length > 1) throw new UsageError('`-` (standard input) may be given once');
  if (stdinName !== undefined && !parsed.positionals.includes('-')) throw new UsageError('--as names the file on standard input; add `-` to read it');
  const svgPath = typeof parsed.values['plot-svg'] === 'string' ? parsed.values['plot-svg'] : undefined;
  if (svgPath !== undefined && (svgPath === '' || parsed.positionals.length !== 1))
    throw new UsageError('--plot-svg writes the plot of one file: name one file and an output path');
  let failed = false;
  const results = [];
  // Paired as check pairs them: a sampling file is explained with its training file's schedule.
  const session = new WorkspaceSession({ stableTree: true, showPath: (p: string) => relative(io.cwd, p) || p });
  for (const input of parsed.positionals) {
    const fromStdin = input === '-';
    if (fromStdin && !io.readStdin) throw new UsageError('standard input cannot be read here');
    const abs = resolve(io.cwd, fromStdin ? (stdinName ?? STDIN_NAME) : input);
    const shown = relative(io.cwd, abs) || input;
    const project = loadProject(abs);
    const read = fromStdin ? decodeText(await io.readStdin!()) : readTextFile(nodeFs, abs, project.limits.maxFileBytes);
    if (!read.ok) {
      io.stderr(`noiselint explain: ${printableLine(`${shown}: ${read.problem}`)}\n`);
      failed = true;
      continue;
    }
    const pairing = session.partnersOf(abs, project);
    const file = readFile(read.text, { path: shown, project, partners: pairing.partners, pairRole: pairing.pairRole });
    results.push(file);
    // Names and keys from the file are escaped line by line (control and bidi characters).
    if (format === 'text') io.stdout(formatExplainText(file).split('\n').map(printable).join('\n'));
    if (svgPath !== undefined) {
      const out = resolve(io.cwd, svgPath);
      const problem = writeAtomically(out, plotSvg(plotDataFor(file, shown, null), shown));
      if (problem) {
        io.stderr(`noiselint explain: cannot write ${svgPath}: ${problem}\n`);
        failed = true;
      } else if (format === 'text') io.stdout(`Plot written to ${relative(io.cwd, out) || svgPath}\n`);
    }
  }
  for (const w of session.warnings) io.stderr(`noiselint explain: warning: ${w}\n`);
  if (format === 'json') io.stdout(`${JSON.stringify(explainJson(results), null, 2)}\n`);
  return failed ? 2 : 0;
}

/** Writes `text` to `path` through a temporary file in the same folder; a one-line problem or null. */
function writeAtomically(path: string, text: string): string | null {
  const temp = join(dirname(path), `.${basename(path)}.${process.pid}.tmp`);
  try {
    const fd = openSync(temp, 'w', 0o644);
    try {
      writeSync(fd, text);
      fsyncSync(fd);
    } finally {
      closeSync(fd);
    }
    renameSync(temp, path);
    return null;
  } catch (err) {
    rmSync(temp, { force: true });
    const e = err as NodeJS.ErrnoException;
    return e.code ? `${e.code}${e.message ? ` (${e.message.split('\n')[0]})` : ''}` : String(err);
  }
}
