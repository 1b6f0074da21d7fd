/** `noiselint explain <file...> [--format text|json]` */
import { parseArgs } from 'node:util';
import { resolve, relative } from 'node:path';
import { readFile } from '../../engine/api';
import { explainJson, formatExplainText } from '../../views/explainFormat';
import { nodeFs, readTextFile } from '../../workspace/fs';
import { UsageError, type CliIO } from '../io';
import { loadProject } from '../../workspace/projectFile';
import { WorkspaceSession } from '../../workspace/session';

export async function runExplain(args: string[], io: CliIO): Promise<number> {
  let parsed;
  try {
    parsed = parseArgs({ args, allowPositionals: true, options: { format: { type: 'string', default: 'text' } } });
  } catch (err) {
    throw new UsageError(err instanceof Error ? err.message : String(err));
  }
  const format = parsed.values.format;
  if (format !== 'text' && format !== 'json') throw new UsageError(`--format must be text or json, not "${format}"`);
  if (parsed.positionals.length === 0) throw new UsageError('name at least one file: noiselint explain <file...>');
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
      io.stderr(`noiselint explain: ${shown}: ${read.problem}\n`);
      failed = true;
      continue;
    }
    const pairing = session.partnersOf(abs, project);
    const file = readFile(read.text, { path: shown, project, partners: pairing.partners, pairRole: pairing.pairRole });
    results.push(file);
    if (format === 'text') io.stdout(formatExplainText(file));
  }
  for (const w of session.warnings) io.stderr(`noiselint explain: warning: ${w}\n`);
  if (format === 'json') io.stdout(`${JSON.stringify(explainJson(results), null, 2)}\n`);
  return failed ? 2 : 0;
}
