/**
 * `explain`: what a config resolves to and the numbers behind it, as readable text or as the
 * documented JSON contract (docs/explain-json.md). Pure: file result in, text or data out.
 */
import { fmtDigits } from '../base/numbers';
import type { DocumentResult, FileReading } from '../engine/api';
import type { Analysis } from '../analysis/analysis';
import { CONCEPTS, type Concept } from '../fields/concepts';
import type { Setup } from '../setup/types';
import { JSON_FORMAT_VERSION } from '../base/version';

/** JSON numbers: exactly zero stays 0; non-finite values (log-SNR at zero SNR) become null. */
function num(x: number): number | null {
  if (x === 0) return 0;
  return Number.isFinite(x) ? x : null;
}

/** 6 significant digits, exponent form for small values: 0.068265, 4.68206e-3, 0. */
export function sig(x: number, digits = 6): string {
  return fmtDigits(x, digits, 1e-3, 1e6);
}

function valueText(v: unknown): string {
  if (Array.isArray(v)) {
    if (v.length <= 4) return `[${v.map((x) => sig(Number(x))).join(', ')}]`;
    return `[${sig(Number(v[0]))}, ${sig(Number(v[1]))}, ..., ${sig(Number(v[v.length - 1]))}] (${v.length} values)`;
  }
  return String(v);
}

export interface ExplainDocumentJson {
  index: number;
  isDiffusionConfig: boolean;
  setup: Record<string, unknown> & { assumed: Concept[]; inherited: Concept[]; inheritedFrom?: string };
  schedule: {
    kind: string;
    family: string;
    trainSteps: number;
    rescaleApplied: boolean;
    terminalSnr: number | null;
    terminalSignal: number | null;
    terminalNoise: number | null;
    logSnrMax: number | null;
    logSnrMin: number | null;
  } | null;
  sampling: {
    spacing: string;
    steps: number;
    stepsAssumed: boolean;
    stepsOffset: number;
    timesteps: number[];
    firstTimestep: number;
    lastTrainStep: number;
    snrAtFirst: number | null;
    outOfRange: number[];
  } | null;
  rescaled: { terminalSnr: number | null; terminalSignal: number | null } | null;
  /** Which code consumes the document and which loader parses it (consumer profile stage). */
  consumer: ExplainConsumerJson | null;
  problems: string[];
}

export interface ExplainConsumerJson {
  family: string;
  familyTitle: string;
  className: string | null;
  classSource: string | null;
  basis: string;
  evidence: string[];
  dialect: string;
  dialectTitle: string;
  dialectBasis: string;
  ignoredKeys: { key: string; reason: string }[];
  loaderReadings: { path: string; raw: string; looks: string; loaded: string }[];
}

export interface ExplainJson {
  formatVersion: number;
  files: { path: string; documents: ExplainDocumentJson[]; problems: string[] }[];
}

function setupJson(setup: Setup): ExplainDocumentJson['setup'] {
  const out: Record<string, unknown> = {};
  for (const concept of CONCEPTS) {
    const field = setup.fields[concept];
    if (field) out[concept] = field.value;
  }
  const inherited = { inherited: [...(setup.inherited?.concepts ?? [])], ...(setup.inherited ? { inheritedFrom: setup.inherited.from } : {}) };
  return { ...out, assumed: [...setup.assumed], ...inherited };
}

function problemsOf(doc: DocumentResult): string[] {
  return [...doc.setup.problems.map((p) => p.message), ...doc.analysis.scheduleProblems, ...doc.analysis.samplingProblems];
}

export function explainDocumentJson(doc: DocumentResult): ExplainDocumentJson {
  const { schedule, sampling, rescaled } = doc.analysis;
  return {
    index: doc.index,
    isDiffusionConfig: doc.setup.isDiffusionConfig,
    setup: setupJson(doc.setup),
    schedule: schedule && {
      kind: schedule.kind,
      family: schedule.family,
      trainSteps: schedule.trainSteps,
      rescaleApplied: schedule.rescaleApplied,
      terminalSnr: num(schedule.terminalSnr),
      terminalSignal: num(schedule.terminalSignal),
      terminalNoise: num(schedule.terminalNoise),
      logSnrMax: num(schedule.logSnrMax),
      logSnrMin: num(schedule.logSnrMin),
    },
    sampling: sampling &&
      schedule && {
        spacing: sampling.spacing,
        steps: sampling.steps,
        stepsAssumed: sampling.stepsAssumed,
        stepsOffset: sampling.stepsOffset,
        timesteps: sampling.timesteps,
        firstTimestep: sampling.firstTimestep,
        lastTrainStep: schedule.trainSteps - 1,
        snrAtFirst: num(sampling.snrAtFirst),
        outOfRange: sampling.outOfRange,
      },
    rescaled: rescaled && { terminalSnr: num(rescaled.terminalSnr), terminalSignal: num(rescaled.terminalSignal) },
    consumer: consumerJson(doc.setup),
    problems: problemsOf(doc),
  };
}

function typedText(t: { value: unknown; kind: string }): string {
  if (t.kind === 'null') return 'null';
  return t.kind === 'str' ? `the string ${JSON.stringify(t.value)}` : `${t.kind} ${String(t.value)}`;
}

function consumerJson(setup: Setup): ExplainConsumerJson | null {
  const c = setup.consumer;
  if (!c) return null;
  const d = c.decision;
  return {
    family: d.family,
    familyTitle: d.familyTitle,
    className: d.className,
    classSource: d.classSource,
    basis: d.basis,
    evidence: [...d.evidence],
    dialect: d.dialect,
    dialectTitle: d.dialectTitle,
    dialectBasis: d.dialectBasis,
    ignoredKeys: c.ignoredKeys.map((k) => ({ key: k.key, reason: k.reason })),
    loaderReadings: c.loaderReadings.map((r) => ({ path: r.path, raw: r.raw, looks: typedText(r.looks), loaded: typedText(r.loaded) })),
  };
}

/** The consumer decision as explain text lines (also used by hover). */
export function consumerLines(setup: Setup): string[] {
  const c = setup.consumer;
  if (!c) return [];
  const d = c.decision;
  const how = d.basis === 'project' ? 'chosen in the project file' : d.basis === 'file' ? 'from the file' : 'nothing recognised';
  const lines = [`  read as: ${d.className ? `${d.className}, ` : ''}${d.familyTitle} (${how})`];
  for (const e of d.evidence) lines.push(`    evidence: ${e}`);
  if (d.classSource) lines.push(`    source: ${d.classSource}`);
  const dialectHow =
    d.dialectBasis === 'project'
      ? 'project file'
      : d.dialectBasis === 'family'
        ? `usual loader of ${d.family}`
        : d.dialectBasis === 'file'
          ? 'evidence in the file'
          : 'file extension';
  lines.push(`  loader: ${d.dialectTitle} (${dialectHow})`);
  for (const k of c.ignoredKeys) lines.push(`    ignored: ${k.key}: ${k.reason}`);
  for (const r of c.loaderReadings) {
    const as = r.unresolved ? `nothing: it cannot be resolved (${r.unresolved})` : typedText(r.loaded);
    lines.push(`    loader reads ${r.path}: ${r.raw} as ${as} (looks like ${typedText(r.looks)})`);
  }
  return lines;
}

export function explainJson(files: FileReading[]): ExplainJson {
  return {
    formatVersion: JSON_FORMAT_VERSION,
    files: files.map((f) => ({
      path: f.path,
      documents: f.documents.map(explainDocumentJson),
      problems: f.parsed.problems.filter((p) => p.severity === 'error').map((p) => p.message),
    })),
  };
}

const MAX_LISTED_STEPS = 60;

function samplingLines(analysis: Analysis, lines: string[]): void {
  const { schedule, sampling } = analysis;
  if (!schedule || !sampling) {
    lines.push('  sampling: not set in this document (no step count or spacing)');
    return;
  }
  const T = schedule.trainSteps;
  const offset = sampling.stepsOffset ? `, steps offset ${sampling.stepsOffset}` : '';
  const assumed = sampling.stepsAssumed ? ' (step count assumed: the file sets a spacing but no step count)' : '';
  lines.push(`  sampling: ${sampling.spacing} spacing, ${sampling.steps} steps${offset}${assumed}`);
  const first = sampling.firstTimestep;
  if (sampling.startsAtLastStep) {
    lines.push(`    first sampled step ${first} = T - 1: starts at the last training step`);
  } else {
    lines.push(`    first sampled step ${first}, not T - 1 = ${T - 1}: the sampler never starts at the last training step`);
  }
  if (sampling.outOfRange.length > 0) {
    lines.push(`    outside 0..${T - 1}: ${sampling.outOfRange.slice(0, 10).join(', ')}${sampling.outOfRange.length > 10 ? ', ...' : ''}`);
  }
  lines.push('    timesteps, noisiest first (SNR at each):');
  const ts = sampling.timesteps;
  const shown = ts.length <= MAX_LISTED_STEPS ? ts : [...ts.slice(0, MAX_LISTED_STEPS / 2), NaN, ...ts.slice(-MAX_LISTED_STEPS / 2)];
  const cells = shown.map((t) => {
    if (Number.isNaN(t)) return '...';
    const inRange = Number.isInteger(t) && t >= 0 && t < schedule.curve.alphaBar.length;
    if (!inRange) return `${t} (out of range)`;
    const abar = schedule.curve.alphaBar[t]!;
    const snr = abar === 1 ? Infinity : abar / (1 - abar);
    return `${t} (${sig(snr, 3)})`;
  });
  for (let i = 0; i < cells.length; i += 5) lines.push(`      ${cells.slice(i, i + 5).join('  ')}`);
}

function rescaleLines(analysis: Analysis, lines: string[]): void {
  const { schedule, rescaled } = analysis;
  if (!schedule) return;
  if (schedule.family === 'flow') {
    lines.push('  zero terminal SNR: built in (flow matching reaches pure noise at t = 1)');
    return;
  }
  if (schedule.family === 'karras') {
    lines.push(`  zero terminal SNR: not reachable with a finite sigma_max; SNR at sigma_max is ${sig(schedule.terminalSnr, 3)}`);
    return;
  }
  if (!rescaled) return;
  if (schedule.rescaleApplied) {
    lines.push('  zero-terminal-SNR rescale (Lin et al. 2023): already applied; terminal SNR is exactly 0');
    return;
  }
  lines.push('  zero-terminal-SNR rescale (Lin et al. 2023) would change:');
  lines.push(
    `    terminal SNR ${sig(schedule.terminalSnr)} -> ${sig(rescaled.terminalSnr)}; signal amplitude at the last step ${sig(schedule.terminalSignal)} -> ${sig(rescaled.terminalSignal)}`,
  );
  lines.push(`    log-SNR at the first step stays ${sig(rescaled.logSnrMax, 4)} (the first abar is unchanged)`);
  lines.push('    an epsilon target becomes undefined at the last step: pair it with a velocity target; the model needs fine-tuning');
}

function documentText(doc: DocumentResult, count: number): string[] {
  const lines: string[] = [];
  const head = count > 1 ? `document ${doc.index + 1} of ${count}` : 'document';
  if (!doc.setup.isDiffusionConfig) {
    lines.push(`${head}: not a diffusion config (no schedule, target, spacing or sampler fields found)`);
    return lines;
  }
  lines.push(`${head}:`);
  lines.push(...consumerLines(doc.setup));
  lines.push('  setup:');
  const width = Math.max(...CONCEPTS.map((c) => c.length));
  for (const concept of CONCEPTS) {
    const field = doc.setup.fields[concept];
    if (!field) continue;
    const classDefault = !field.source && !field.inherited && doc.setup.consumer?.decision.className && field.note;
    const where = field.source
      ? `  (${field.source.path})`
      : field.inherited
        ? `  (from training file ${field.inherited.from}${field.inherited.key ? `: ${field.inherited.key}` : ', assumed there'})`
        : classDefault
          ? `  (assumed: ${field.note})`
          : '  (assumed default)';
    lines.push(`    ${concept.padEnd(width)}  ${valueText(field.value)}${where}`);
  }
  const { schedule } = doc.analysis;
  if (schedule) {
    const label =
      schedule.family === 'discrete'
        ? `${schedule.kind}, T = ${schedule.trainSteps}`
        : schedule.family === 'flow'
          ? `flow matching, T = ${schedule.trainSteps}`
          : `Karras sigmas (sigma_data 0.5)`;
    lines.push(`  schedule: ${label}${schedule.rescaleApplied ? ', rescaled to zero terminal SNR' : ''}`);
    lines.push(`    signal amplitude at the last step  sqrt(abar_T)      ${sig(schedule.terminalSignal)}`);
    lines.push(`    noise amplitude at the last step   sqrt(1 - abar_T)  ${sig(schedule.terminalNoise)}`);
    lines.push(`    terminal SNR                       abar_T/(1-abar_T) ${sig(schedule.terminalSnr)}`);
    lines.push(`    log-SNR range                      ${sig(schedule.logSnrMax, 4)} (first step) .. ${sig(schedule.logSnrMin, 4)} (last step)`);
  }
  samplingLines(doc.analysis, lines);
  rescaleLines(doc.analysis, lines);
  for (const p of problemsOf(doc)) lines.push(`  problem: ${p}`);
  return lines;
}

export function formatExplainText(file: FileReading): string {
  const lines: string[] = [`${file.path}`];
  for (const p of file.parsed.problems) {
    if (p.severity === 'error') lines.push(`  problem: ${p.message}`);
  }
  if (file.documents.length === 0) lines.push('  (no documents)');
  for (const doc of file.documents) lines.push(...documentText(doc, file.documents.length));
  return `${lines.join('\n')}\n`;
}
