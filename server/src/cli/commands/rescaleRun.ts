/**
 * `noiselint rescale-run <file...> [--sampling-only] [--write [--accept-retraining]]`
 *
 * Moves a whole run to zero terminal SNR in one step (fix/runRescale.ts): the training file
 * named (or the training file of the sampling file named) and all its sampling partners, or a
 * file alone. Prints the change as one unified diff across the files, then a before/after table
 * of the numbers (terminal SNR, signal amplitude at the last step, first sampled timestep and
 * its SNR, guidance rescale), what the sampling code must do where no setting can, the cautions,
 * and what `check` would still report afterwards. Writes nothing unless --write is given; a
 * change to what the model learns is written only with --accept-retraining as well.
 *
 * Exit codes: 0 shown or written; 1 not written (an edit could not be made, a file changed on
 * disk, consent missing); 2 bad usage or an unreadable file.
 */
import { resolve } from 'node:path';
import { analyzeText, readFile } from '../../engine/api';
import { applyEdits } from '../../fix/apply';
import { composeChanges, type TextChange } from '../../fix/changes';
import { planRunRescale, RUN_FIXED_RULES } from '../../fix/runRescale';
import { formatRunNumbers } from '../../views/runRescale';
import type { PartnerDocument } from '../../rules/types';
import { readRun, type RunFileRead } from '../../workspace/run';
import { WorkspaceSession } from '../../workspace/session';
import { UsageError, type CliIO } from '../io';
import { unifiedPatch } from '../output/patch';
import { displayPath } from '../output/report';
import { writeAtomically } from './fix';
import { parseCommandArgs, type CommandSpec } from '../options';

interface RescaleArgs {
  inputs: string[];
  samplingOnly: boolean;
  write: boolean;
  acceptRetraining: boolean;
}

export const RESCALE_RUN_SPEC: CommandSpec = {
  name: 'rescale-run',
  summary: 'Moves a whole run (training file and its sampling partners) to zero terminal SNR in one step.',
  usage: '<file...> [options]',
  details: ['Prints the change as one diff across the files and a before/after table; writes nothing without --write.'],
  options: [
    { name: 'sampling-only', type: 'boolean', description: 'Only the sampling side (the trained checkpoint stays valid).' },
    { name: 'write', type: 'boolean', description: 'Write the change (atomically) instead of printing it only.' },
    {
      name: 'accept-retraining',
      type: 'boolean',
      description: 'With --write: also write changes to what the model learns (it then needs fine-tuning).',
    },
  ],
  exitCodes: [
    [0, 'shown or written'],
    [1, 'not written (an edit could not be made, a file changed on disk, consent missing)'],
    [2, 'bad usage or an unreadable file'],
  ],
  examples: ['noiselint rescale-run configs/train.yaml', 'noiselint rescale-run configs/train.yaml --write --accept-retraining'],
};

function parseRescaleArgs(args: string[]): RescaleArgs {
  const parsed = parseCommandArgs(RESCALE_RUN_SPEC, args);
  if (parsed.positionals.length === 0) throw new UsageError('name a training or sampling file: noiselint rescale-run <file...>');
  return {
    inputs: parsed.positionals,
    samplingOnly: parsed.values['sampling-only'] === true,
    write: parsed.values.write === true,
    acceptRetraining: parsed.values['accept-retraining'] === true,
  };
}

type LoadedFile = RunFileRead;

/** What `check` reports of the fixed rules once the new texts are read as a pair. */
function remainingAfter(files: LoadedFile[], texts: Map<string, string>): string[] {
  const training = files.find((f) => f.side === 'training');
  let partners: PartnerDocument[] = [];
  if (training) {
    const t = readFile(texts.get(training.abs) ?? training.text, { path: training.shown, project: training.project });
    partners = t.documents.filter((d) => d.setup.isDiffusionConfig).map((d) => ({ path: training.shown, setup: d.setup, analysis: d.analysis }));
  }
  const out: string[] = [];
  for (const f of files) {
    const text = texts.get(f.abs) ?? f.text;
    const sampling = f.side === 'sampling' && partners.length > 0;
    const result = analyzeText(text, { path: f.shown, project: f.project, ...(sampling ? { partners, pairRole: 'sampling' as const } : {}) });
    for (const finding of result.findings) {
      if (RUN_FIXED_RULES.includes(finding.rule)) out.push(`${f.shown}: ${finding.rule}: ${finding.message}`);
    }
  }
  return out;
}

export async function runRescaleRun(args: string[], io: CliIO): Promise<number> {
  const options = parseRescaleArgs(args);
  const session = new WorkspaceSession({ stableTree: true, showPath: (p) => displayPath(io.cwd, p) });
  const { files, problems } = readRun(
    options.inputs.map((i) => resolve(io.cwd, i)),
    session,
    (p) => displayPath(io.cwd, p),
  );
  for (const p of problems) io.stderr(`noiselint rescale-run: ${p}\n`);
  const failed = problems.length > 0;
  for (const w of session.warnings) io.stderr(`noiselint rescale-run: warning: ${w.split(`${io.cwd}/`).join('')}\n`);
  if (failed) return 2;
  const plan = planRunRescale(
    files.map((f) => ({ path: f.shown, side: f.side, reading: f.reading })),
    { samplingOnly: options.samplingOnly },
  );
  if (plan.blocked.length > 0) {
    for (const p of plan.blocked)
      io.stderr(`noiselint rescale-run: ${p}: the change cannot be written without breaking the text or losing a comment; nothing written\n`);
    return 1;
  }
  const texts = new Map<string, string>();
  // Where each new text differs from its file, for the diff.
  const changes = new Map<string, TextChange[]>();
  for (const f of files) {
    const fp = plan.files.find((p) => p.path === f.shown);
    if (!fp || !fp.textEdits || fp.textEdits.length === 0) continue;
    texts.set(f.abs, applyEdits(f.text, fp.textEdits));
    changes.set(f.abs, composeChanges([], fp.textEdits));
  }

  const out: string[] = [];
  const run = files.some((f) => f.side === 'training')
    ? `run of ${files.find((f) => f.side === 'training')!.shown} (${files.length} ${files.length === 1 ? 'file' : 'files'})`
    : files.map((f) => f.shown).join(', ');
  if (plan.empty && plan.notes.length > 0) {
    out.push(`Nothing this operation can write in the ${run}: what the consuming code cannot take is listed below.`);
  } else if (plan.empty) {
    out.push(
      `Nothing to change in the ${run}: it is already at zero terminal SNR${options.samplingOnly ? ' as far as sampling-only changes go' : ''}.`,
    );
  } else {
    for (const f of files) {
      const after = texts.get(f.abs);
      const changed = changes.get(f.abs);
      if (after !== undefined && changed) out.push(unifiedPatch(`a/${f.shown}`, `b/${f.shown}`, f.text, after, changed).replace(/\n$/, ''));
    }
    out.push('');
    out.push(`Changes in the ${run}${options.samplingOnly ? ' (sampling-only)' : ''}:`);
    for (const fp of plan.files) for (const c of fp.changes) for (const w of c.what) out.push(`  ${fp.path}: ${w}`);
  }
  const table = formatRunNumbers(plan);
  if (table) out.push('', 'Numbers before and after (shared-math, Lin et al. 2023):', table.replace(/\n$/, ''));
  if (plan.notes.length > 0) out.push('', 'Not expressible in the files:', ...plan.notes.map((n) => `  ${n}`));
  const remaining = remainingAfter(files, texts);
  out.push('');
  out.push(
    remaining.length === 0
      ? 'Afterwards check reports none of the fixed rules and no mismatch between the files.'
      : 'Afterwards check would still report:',
  );
  for (const r of remaining) out.push(`  ${r}`);
  out.push('', 'Cautions:', ...plan.cautions.map((c) => `  - ${c}`));
  io.stdout(`${out.join('\n')}\n`);

  if (!options.write || texts.size === 0) {
    if (texts.size > 0) io.stderr('noiselint rescale-run: nothing written (add --write to apply)\n');
    return 0;
  }
  if (plan.changesTraining && !options.acceptRetraining) {
    io.stderr(
      'noiselint rescale-run: not written: the change alters what the model learns (schedule, target, offset noise); add --accept-retraining, or --sampling-only\n',
    );
    return 1;
  }
  let notWritten = false;
  for (const f of files) {
    const after = texts.get(f.abs);
    if (after === undefined) continue;
    const written = writeAtomically(f.abs, f.text, after);
    if (!written.ok) {
      io.stderr(`noiselint rescale-run: ${f.shown}: not written: ${written.problem}\n`);
      notWritten = true;
      continue;
    }
    io.stderr(`noiselint rescale-run: ${f.shown}: written\n`);
  }
  return notWritten ? 1 : 0;
}
