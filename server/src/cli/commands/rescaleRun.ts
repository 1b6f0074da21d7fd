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
import { parseArgs } from 'node:util';
import { resolve } from 'node:path';
import { createTwoFilesPatch } from 'diff';
import { analyzeText, readFile, type FileReading } from '../../engine/api';
import { applyEdits } from '../../fix/apply';
import { planRunRescale, RUN_FIXED_RULES, type BeforeAfter, type RunFileInput, type RunPlan } from '../../fix/runRescale';
import type { PartnerDocument } from '../../rules/types';
import { runFilesOf } from '../../workspace/pairing';
import { WorkspaceSession } from '../../workspace/session';
import type { ResolvedProject } from '../../workspace/types';
import { UsageError, type CliIO } from '../io';
import { displayPath } from '../output/report';
import { writeAtomically } from './fix';

interface RescaleArgs {
  inputs: string[];
  samplingOnly: boolean;
  write: boolean;
  acceptRetraining: boolean;
}

function parseRescaleArgs(args: string[]): RescaleArgs {
  let parsed;
  try {
    parsed = parseArgs({
      args,
      allowPositionals: true,
      strict: true,
      options: {
        'sampling-only': { type: 'boolean', default: false },
        write: { type: 'boolean', default: false },
        'accept-retraining': { type: 'boolean', default: false },
      },
    });
  } catch (err) {
    throw new UsageError(err instanceof Error ? err.message.split('\n')[0] : String(err));
  }
  if (parsed.positionals.length === 0) throw new UsageError('name a training or sampling file: noiselint rescale-run <file...>');
  return {
    inputs: parsed.positionals,
    samplingOnly: !!parsed.values['sampling-only'],
    write: !!parsed.values.write,
    acceptRetraining: !!parsed.values['accept-retraining'],
  };
}

interface LoadedFile {
  abs: string;
  shown: string;
  text: string;
  project: ResolvedProject;
  side: RunFileInput['side'];
  reading: FileReading;
}

/** The files of the runs the inputs belong to, each once, training files first. */
function loadRun(inputs: string[], io: CliIO, session: WorkspaceSession): { files: LoadedFile[]; failed: boolean } {
  const shown = (p: string) => displayPath(io.cwd, p);
  const sides = new Map<string, RunFileInput['side']>();
  for (const input of inputs) {
    const abs = resolve(io.cwd, input);
    const run = runFilesOf(abs, (p) => {
      const found = session.partnersOf(p, session.projectFor(p).project);
      return { pairRole: found.pairRole, paths: found.paths };
    });
    if (!run.training) {
      if (!sides.has(abs)) sides.set(abs, 'alone');
      continue;
    }
    sides.set(run.training, 'training');
    for (const s of run.sampling) if (sides.get(s) !== 'training') sides.set(s, 'sampling');
  }
  const files: LoadedFile[] = [];
  let failed = false;
  const order = [...sides].sort((a, b) => (a[1] === 'sampling' ? 1 : 0) - (b[1] === 'sampling' ? 1 : 0));
  for (const [abs, side] of order) {
    const { project } = session.projectFor(abs);
    const read = session.readText(abs, project);
    if (!read.ok) {
      io.stderr(`noiselint rescale-run: ${shown(abs)}: ${read.problem}\n`);
      failed = true;
      continue;
    }
    const pairing = side === 'sampling' ? session.partnersOf(abs, project) : null;
    const reading = readFile(read.text, {
      path: shown(abs),
      project,
      partners: pairing?.partners,
      pairRole: pairing?.pairRole,
    });
    files.push({ abs, shown: shown(abs), text: read.text, project, side, reading });
  }
  return { files, failed };
}

function cell(x: number | null, digits = 4): string {
  if (x === null) return '-';
  if (x === 0) return '0';
  if (!Number.isFinite(x)) return x > 0 ? 'inf' : '-inf';
  if (Number.isInteger(x)) return String(x);
  const abs = Math.abs(x);
  return abs >= 1e-3 && abs < 1e5 ? String(Number(x.toPrecision(digits))) : x.toExponential(digits - 1).replace(/\.?0+e/, 'e');
}

function pair(v: BeforeAfter): [string, string] {
  return [cell(v.before), cell(v.after)];
}

/** The before/after table, one block of rows per document with a discrete schedule. */
export function formatRunNumbers(plan: RunPlan): string {
  const lines: string[] = [];
  for (const row of plan.numbers) {
    lines.push(`${row.path}${row.documentIndex > 0 ? ` (document ${row.documentIndex + 1})` : ''}:`);
    const rows: [string, [string, string]][] = [
      ['terminal SNR (SNR_T)', pair(row.terminalSnr)],
      ['signal amplitude at the last step sqrt(abar_T)', pair(row.terminalSignal)],
      ['first sampled timestep', pair(row.firstTimestep)],
      ['SNR at the first sampled timestep', pair(row.snrAtFirst)],
      ['guidance rescale', pair(row.guidanceRescale)],
    ];
    if (row.firstSigma) rows.push(['sigma at the first sampled timestep', pair(row.firstSigma)]);
    const w0 = Math.max(...rows.map((r) => r[0].length));
    const w1 = Math.max('before'.length, ...rows.map((r) => r[1][0].length));
    lines.push(`  ${''.padEnd(w0)}  ${'before'.padEnd(w1)}  after`);
    for (const [label, [b, a]] of rows) lines.push(`  ${label.padEnd(w0)}  ${b.padEnd(w1)}  ${a}`);
  }
  return lines.length ? `${lines.join('\n')}\n` : '';
}

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
  const { files, failed } = loadRun(options.inputs, io, session);
  for (const w of session.warnings) io.stderr(`noiselint rescale-run: warning: ${w.split(`${io.cwd}/`).join('')}\n`);
  if (failed) return 2;
  const plan = planRunRescale(
    files.map((f) => ({ path: f.shown, side: f.side, reading: f.reading })),
    { samplingOnly: options.samplingOnly },
  );
  if (plan.blocked.length > 0) {
    for (const p of plan.blocked) io.stderr(`noiselint rescale-run: ${p}: the change cannot be written without breaking the text or losing a comment; nothing written\n`);
    return 1;
  }
  const texts = new Map<string, string>();
  for (const f of files) {
    const fp = plan.files.find((p) => p.path === f.shown);
    if (!fp || !fp.textEdits || fp.textEdits.length === 0) continue;
    texts.set(f.abs, applyEdits(f.text, fp.textEdits));
  }

  const out: string[] = [];
  const run = files.some((f) => f.side === 'training')
    ? `run of ${files.find((f) => f.side === 'training')!.shown} (${files.length} ${files.length === 1 ? 'file' : 'files'})`
    : files.map((f) => f.shown).join(', ');
  if (plan.empty) {
    out.push(`Nothing to change in the ${run}: it is already at zero terminal SNR${options.samplingOnly ? ' as far as sampling-only changes go' : ''}.`);
  } else {
    for (const f of files) {
      const after = texts.get(f.abs);
      if (after !== undefined) out.push(createTwoFilesPatch(`a/${f.shown}`, `b/${f.shown}`, f.text, after).replace(/\n$/, ''));
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
  out.push(remaining.length === 0 ? 'Afterwards check reports none of the fixed rules and no mismatch between the files.' : 'Afterwards check would still report:');
  for (const r of remaining) out.push(`  ${r}`);
  out.push('', 'Cautions:', ...plan.cautions.map((c) => `  - ${c}`));
  io.stdout(`${out.join('\n')}\n`);

  if (!options.write || texts.size === 0) {
    if (texts.size > 0) io.stderr('noiselint rescale-run: nothing written (add --write to apply)\n');
    return 0;
  }
  if (plan.changesTraining && !options.acceptRetraining) {
    io.stderr('noiselint rescale-run: not written: the change alters what the model learns (schedule, target, offset noise); add --accept-retraining, or --sampling-only\n');
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
