/** `noiselint explain <file...> [--format text|json] [--plot-svg <out.svg>]` */
import { parseArgs } from 'node:util';
import { closeSync, fsyncSync, openSync, renameSync, rmSync, writeSync } from 'node:fs';
import { basename, dirname, join, resolve, relative } from 'node:path';
import { readFile } from '../../engine/api';
import { explainJson, formatExplainText } from '../../views/explainFormat';
import { nodeFs, readTextFile } from '../../workspace/fs';
import { UsageError, type CliIO } from '../io';
import { printable, printableLine } from '../output/printable';
import { loadProject } from '../../workspace/projectFile';
import { WorkspaceSession } from '../../workspace/session';
import { plotDataFor } from '../../views/plotData';
import { plotSvg } from '../../views/plotSvg';

export async function runExplain(args: string[], io: CliIO): Promise<number> {
  let parsed;
  try {
    parsed = parseArgs({ args, allowPositionals: true, options: { format: { type: 'string', default: 'text' }, 'plot-svg': { type: 'string' } } });
  } catch (err) {
    throw new UsageError(err instanceof Error ? err.message : String(err));
  }
  const format = parsed.values.format;
  if (format !== 'text' && format !== 'json') throw new UsageError(`--format must be text or json, not "${format}"`);
  if (parsed.positionals.length === 0) throw new UsageError('name at least one file: noiselint explain <file...>');
  const svgPath = parsed.values['plot-svg'];
  if (svgPath !== undefined && (svgPath === '' || parsed.positionals.length !== 1)) throw new UsageError('--plot-svg writes the plot of one file: name one file and an output path');
  let failed = false;
  const results = [];
  // Paired as check pairs them: a sampling file is explained with its training file's schedule.
  const session = new WorkspaceSession({ stableTree: true, showPath: (p: string) => relative(io.cwd, p) || p });
  for (const input of parsed.positionals) {
    const abs = resolve(io.cwd, input);
    const shown = relative(io.cwd, abs) || input;
    const project = loadProject(abs);
    const read = readTextFile(nodeFs, abs, project.limits.maxFileBytes);
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
