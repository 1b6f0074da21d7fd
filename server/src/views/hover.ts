/**
 * Hover model: the numbers behind the schedule, target, spacing and guidance fields under the
 * cursor, rendered as markdown (with a small log-SNR chart) or as a plain-text table.
 * Protocol-agnostic: offsets and strings only.
 */
import type { FileReading, DocumentResult } from '../engine/api';
import type { Analysis } from '../analysis/analysis';
import type { Concept } from '../fields/concepts';
import type { Span } from '../parse/types';
import { valueOf } from '../setup/types';
import { fieldAtOffset } from './fieldAt';
import { shortNumber as num } from './displayNumber';
import { logSnrSparkline, svgDataUri } from './sparkline';

export type HoverTopic = 'schedule' | 'target' | 'spacing' | 'guidance';

export const HOVER_TOPIC: Partial<Record<Concept, HoverTopic>> = {
  trainSteps: 'schedule',
  betaSchedule: 'schedule',
  betaStart: 'schedule',
  betaEnd: 'schedule',
  betas: 'schedule',
  zeroTerminalSnr: 'schedule',
  sigmaMin: 'schedule',
  sigmaMax: 'schedule',
  rho: 'schedule',
  flowShift: 'schedule',
  predictionTarget: 'target',
  timestepSpacing: 'spacing',
  stepsOffset: 'spacing',
  sampleSteps: 'spacing',
  sampler: 'spacing',
  karrasSigmas: 'spacing',
  guidanceScale: 'guidance',
  guidanceRescale: 'guidance',
};

/** Terminal signal below which a schedule counts as (near) zero SNR for guidance (DESIGN section 5). */
const NEAR_ZERO_SIGNAL = 1e-3;
/** Guidance rescale that works well with guidance 7.5 (common practice). */
const COMMON_RESCALE = 0.7;
const MAX_LISTED_TIMESTEPS = 10;

interface Row {
  label: string;
  current: string;
  rescaled?: string;
}

export interface HoverModel {
  topic: HoverTopic;
  concept: Concept;
  span: Span;
  title: string;
  /** Schedule numbers, current and (for discrete schedules) after the zero-SNR rescale. */
  rows: Row[];
  hasRescaledColumn: boolean;
  /** Sentences about the sampling timesteps. */
  sampling: string[];
  /** What the hovered target or guidance field means here (shown first). */
  focus: string[];
  /** Schedule problems and what the rescale would change. */
  notes: string[];
  /** log-SNR curves for the chart (the analysis' shared arrays: read only). */
  chart: { current: ArrayLike<number>; rescaled: ArrayLike<number> | null } | null;
}

function listTimesteps(ts: number[]): string {
  if (ts.length <= MAX_LISTED_TIMESTEPS) return ts.join(', ');
  return `${ts.slice(0, MAX_LISTED_TIMESTEPS - 2).join(', ')}, ..., ${ts[ts.length - 1]}`;
}

function scheduleRows(analysis: Analysis): { rows: Row[]; rescaledColumn: boolean } {
  const s = analysis.schedule;
  if (!s) return { rows: [], rescaledColumn: false };
  const r = s.family === 'discrete' && !s.rescaleApplied ? analysis.rescaled : null;
  const rows: Row[] = [
    {
      label: s.family === 'flow' ? 'signal at the last step (1 - t)' : 'signal at the last step sqrt(abar_T)',
      current: num(s.terminalSignal, 3),
      rescaled: r ? num(r.terminalSignal, 3) : undefined,
    },
    { label: 'terminal SNR (SNR_T)', current: num(s.terminalSnr, 3), rescaled: r ? num(r.terminalSnr, 3) : undefined },
    {
      label: 'log-SNR range',
      current: `${num(s.logSnrMin, 3)} to ${num(s.logSnrMax, 3)}`,
      rescaled: r ? `-inf to ${num(r.logSnrMax, 3)}` : undefined,
    },
  ];
  return { rows, rescaledColumn: !!r };
}

function samplingLines(analysis: Analysis): string[] {
  const s = analysis.schedule;
  const p = analysis.sampling;
  const lines: string[] = [];
  if (!s) return lines;
  if (!p) {
    for (const problem of analysis.samplingProblems) lines.push(`Sampling timesteps could not be computed: ${problem}.`);
    return lines;
  }
  const steps = p.stepsAssumed ? `${p.steps} steps (assumed: the file sets no step count)` : `${p.steps} steps`;
  const spacing = p.spacing === 'flow' || p.spacing === 'karras' ? `${p.spacing} sampling` : `${p.spacing} spacing`;
  lines.push(`${spacing}, ${steps}${p.stepsOffset ? `, offset ${p.stepsOffset}` : ''}.`);
  const last = p.timesteps[p.timesteps.length - 1];
  const lastTrain = s.trainSteps - 1;
  lines.push(
    `First timestep ${p.firstTimestep} of ${lastTrain}${p.startsAtLastStep ? ' (the last training step)' : ''}, last ${last}; ` +
      `SNR at the first ${num(p.snrAtFirst, 3)} (signal ${num(p.signalAtFirst, 3)}).`,
  );
  lines.push(`Timesteps: ${listTimesteps(p.timesteps)}.`);
  if (p.outOfRange.length > 0) lines.push(`Outside [0, ${lastTrain}]: ${listTimesteps(p.outOfRange)}.`);
  return lines;
}

function rescaleNotes(analysis: Analysis): string[] {
  const s = analysis.schedule;
  if (!s || s.family !== 'discrete') return [];
  if (s.rescaleApplied) return ['Already rescaled to zero terminal SNR (Lin et al. 2023, Algorithm 1).'];
  if (s.reachesZeroSnr) return ['This schedule already reaches zero SNR at the last step.'];
  const r = analysis.rescaled;
  if (!r) return [];
  const notes = [
    `Zero-terminal-SNR rescale (Lin et al. 2023): SNR_T ${num(s.terminalSnr, 3)} -> 0, sqrt(abar_T) ${num(s.terminalSignal, 3)} -> 0; ` +
      'the first step is unchanged. It changes what the model learns: needs fine-tuning.',
  ];
  const p = analysis.sampling;
  if (p && p.firstTimestep >= 0 && p.firstTimestep < r.curve.alphaBar.length && Number.isInteger(p.firstTimestep)) {
    const abar = r.curve.alphaBar[p.firstTimestep]!;
    notes.push(`After the rescale the first sampling step would have SNR ${num(abar / (1 - abar), 3)}.`);
  }
  return notes;
}

function targetNotes(doc: DocumentResult): string[] {
  const target = valueOf(doc.setup, 'predictionTarget');
  const s = doc.analysis.schedule;
  if (!target || !s) return [];
  if (target === 'epsilon') {
    if (s.reachesZeroSnr) {
      return [
        'Epsilon target on a zero-SNR schedule: x0 = (x_t - sqrt(1 - abar) eps) / sqrt(abar) is undefined at the last step (abar = 0). ' +
          'A velocity target (Salimans & Ho 2022) stays defined; switching needs fine-tuning.',
      ];
    }
    return [
      'Epsilon target: fine on this schedule, but it becomes undefined at the last step once the schedule reaches zero SNR; switch to velocity together with the rescale.',
    ];
  }
  if (target === 'v') return ['Velocity target v = sqrt(abar) eps - sqrt(1 - abar) x0 (Salimans & Ho 2022): defined at zero SNR.'];
  if (target === 'x0') return ['Sample (x0) target: defined at zero SNR.'];
  if (target === 'edm')
    return ['EDM preconditioning (Karras et al. 2022): the network predicts the clean sample at high noise, so it stays defined at zero SNR.'];
  return ['Flow-matching velocity target: the path reaches zero SNR at t = 1 by construction.'];
}

function guidanceNotes(doc: DocumentResult): string[] {
  const w = valueOf(doc.setup, 'guidanceScale');
  const phi = valueOf(doc.setup, 'guidanceRescale');
  const s = doc.analysis.schedule;
  const notes: string[] = [];
  const shown = (concept: 'guidanceScale' | 'guidanceRescale', v: number | undefined) => {
    const field = doc.setup.fields[concept];
    if (v === undefined || !field) return 'not set';
    return field.assumed ? `not set (assumed ${num(v, 3)})` : num(v, 3);
  };
  notes.push(`Guidance scale ${shown('guidanceScale', w)}, guidance rescale ${shown('guidanceRescale', phi)}.`);
  if (s && w !== undefined && w > 1 && !(phi !== undefined && phi > 0) && s.terminalSignal < NEAR_ZERO_SIGNAL) {
    notes.push(
      `Strong guidance on a (near) zero-SNR schedule over-exposes without guidance rescale (Lin et al. 2023, eqs. 13-16); ` +
        `common practice: rescale ${COMMON_RESCALE}.`,
    );
  } else if (phi !== undefined && phi > 0) {
    notes.push(`Output = ${num(phi, 3)} * rescaled + ${num(1 - phi, 3)} * plain guidance (Lin et al. 2023, eqs. 13-16).`);
  }
  return notes;
}

function titleFor(doc: DocumentResult): string {
  const s = doc.analysis.schedule;
  const target = valueOf(doc.setup, 'predictionTarget');
  const assumed = doc.setup.fields.predictionTarget?.assumed;
  if (!s) return 'noise schedule: not computable';
  const bits = [`${s.kind}`, `T = ${s.trainSteps}`];
  if (target) bits.push(`${target} target${assumed ? ' (assumed)' : ''}`);
  const from = doc.setup.inherited ? ` (from training file ${doc.setup.inherited.from})` : '';
  return `noise schedule: ${bits.join(', ')}${from}`;
}

/** Which values the document takes from its training file (setup/inherit.ts). */
export function inheritedLines(doc: DocumentResult): string[] {
  const inherited = doc.setup.inherited;
  if (!inherited) return [];
  const parts = inherited.concepts.map((c) => {
    const field = doc.setup.fields[c];
    const v = field?.value;
    const shown = Array.isArray(v) ? `a list of ${v.length} betas` : typeof v === 'number' ? num(v, 4) : String(v);
    return `${c} ${shown}${field?.inherited?.assumedThere ? ' (assumed there)' : ''}`;
  });
  return [`This file does not set them, so it takes them from training file ${inherited.from}: ${parts.join(', ')}.`];
}

/** The hover model for `offset`, or null when no schedule/target/spacing/guidance field is there. */
export function hoverModelAt(file: FileReading, offset: number): HoverModel | null {
  const hit = fieldAtOffset(file, offset);
  if (!hit) return null;
  const topic = HOVER_TOPIC[hit.concept];
  if (!topic || !hit.document.setup.isDiffusionConfig) return null;
  const doc = hit.document;
  const { analysis } = doc;
  const { rows, rescaledColumn } = scheduleRows(analysis);
  const focus = topic === 'target' ? targetNotes(doc) : topic === 'guidance' ? guidanceNotes(doc) : [];
  const notes: string[] = [...inheritedLines(doc)];
  notes.push(...analysis.scheduleProblems.map((p) => `The schedule could not be computed: ${p}.`));
  notes.push(...rescaleNotes(analysis));
  const consumer = doc.setup.consumer?.decision;
  if (consumer && consumer.family !== 'generic') {
    const who = consumer.className ? `${consumer.className} (${consumer.familyTitle})` : consumer.familyTitle;
    notes.push(`Read as ${who}, from ${consumer.evidence[0]}; loader: ${consumer.dialectTitle}.`);
  }
  const s = analysis.schedule;
  return {
    topic,
    concept: hit.concept,
    span: hit.span,
    title: titleFor(doc),
    rows,
    hasRescaledColumn: rescaledColumn,
    sampling: samplingLines(analysis),
    focus,
    notes,
    chart: s ? { current: s.curve.logSnr, rescaled: rescaledColumn && analysis.rescaled ? analysis.rescaled.curve.logSnr : null } : null,
  };
}

function escapeCell(text: string): string {
  return text.replace(/\|/g, '\\|');
}

export function renderHoverMarkdown(model: HoverModel, options: { images?: boolean } = {}): string {
  const out: string[] = [`**${model.title}**`, ''];
  for (const line of model.focus) out.push(line, '');
  if (model.rows.length > 0) {
    if (model.hasRescaledColumn) {
      out.push('| | current | rescaled to zero SNR |', '|---|---|---|');
      for (const r of model.rows) out.push(`| ${escapeCell(r.label)} | ${escapeCell(r.current)} | ${escapeCell(r.rescaled ?? '')} |`);
    } else {
      out.push('| | current |', '|---|---|');
      for (const r of model.rows) out.push(`| ${escapeCell(r.label)} | ${escapeCell(r.current)} |`);
    }
    out.push('');
  }
  if (model.sampling.length > 0) {
    out.push(`**sampling**: ${model.sampling.join(' ')}`, '');
  }
  for (const note of model.notes) out.push(note, '');
  if (model.chart && options.images !== false) {
    const svg = logSnrSparkline(model.chart.current, model.chart.rescaled);
    const caption = model.chart.rescaled ? 'log-SNR over t: solid current, dashed rescaled' : 'log-SNR over t';
    out.push(`![${caption}](${svgDataUri(svg)})`, '', `*${caption}*`);
  }
  return out.join('\n').trimEnd();
}

export function renderHoverPlainText(model: HoverModel): string {
  const out: string[] = [model.title, ...model.focus];
  if (model.rows.length > 0) {
    const w0 = Math.max(...model.rows.map((r) => r.label.length));
    const w1 = Math.max('current'.length, ...model.rows.map((r) => r.current.length));
    const line = (a: string, b: string, c?: string) => `${a.padEnd(w0)}  ${b.padEnd(w1)}${c !== undefined ? `  ${c}` : ''}`.trimEnd();
    out.push(line('', 'current', model.hasRescaledColumn ? 'rescaled' : undefined));
    for (const r of model.rows) out.push(line(r.label, r.current, model.hasRescaledColumn ? (r.rescaled ?? '') : undefined));
  }
  if (model.sampling.length > 0) out.push(`sampling: ${model.sampling.join(' ')}`);
  out.push(...model.notes);
  return out.join('\n');
}

export interface HoverText {
  span: Span;
  text: string;
  format: 'markdown' | 'plaintext';
}

/** `images: false` leaves the embedded chart out of markdown (clients that show it as text). */
export function hoverAt(file: FileReading, offset: number, format: 'markdown' | 'plaintext', options: { images?: boolean } = {}): HoverText | null {
  const model = hoverModelAt(file, offset);
  if (!model) return null;
  return {
    span: model.span,
    format,
    text: format === 'markdown' ? renderHoverMarkdown(model, { images: options.images ?? true }) : renderHoverPlainText(model),
  };
}
