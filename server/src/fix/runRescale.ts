/**
 * The run rescale: one operation that moves a whole run (a training file and its sampling
 * partners, or one file alone) to zero terminal SNR (Lin et al. 2023):
 *  - the schedule is rescaled (the reader's flag, or the rescaled explicit beta list);
 *  - an epsilon target becomes velocity (Salimans & Ho 2022);
 *  - offset noise is removed, keeping its comment;
 *  - the sampler's spacing becomes trailing (where it uses one), with steps offset 0 when the
 *    offset would push trailing past the last step;
 *  - guidance rescale 0.7 is set where guidance > 1 and none is set (common practice);
 *  - values a sampling file writes itself are aligned with the training file;
 *  - for sigma-space samplers, the setting that bounds the infinite first sigma is written where
 *    the reader has one, else the plan says what the sampling code must do.
 * With `samplingOnly`, only what changes how the model is sampled is kept (spacing, guidance
 * rescale, aligning a sampling file with its training file): nothing the model learns changes.
 *
 * Pure: readings in, concept edits per document, the rendered text edits per file and a
 * before/after table of the numbers out. Every "how does this reader write it" question goes
 * through ReaderAnswers (setup/readerAnswers.ts).
 */
import {
  computeSchedule,
  samplingTimesteps,
  sigmaFromAlphaBar,
  snrFromAlphaBar,
  type ScheduleParams,
  type ScheduleNumbers,
} from '@noiselint/shared-math';
import type { TextEdit } from '../base/findings';
import { isSigmaSpaceSampler } from '../analysis/analysis';
import type { Concept, ConceptValues } from '../fields/concepts';
import type { Analysis } from '../analysis/analysis';
import type { ParsedFile } from '../parse/types';
import type { ConceptEdit } from '../rules/types';
import { fmtValue } from '../rules/format';
import { readerAnswersFor, type ReaderAnswers } from '../setup/readerAnswers';
import type { Setup } from '../setup/types';
import { renderConceptEdits } from './render';
import { sortEdits } from './apply';

/** Guidance rescale written where guidance > 1 (Lin et al. 2023 use 0.7; common practice). */
export const RUN_GUIDANCE_RESCALE = 0.7;

/** The rules whose findings the operation removes (check reports none of them afterwards). */
export const RUN_FIXED_RULES: readonly string[] = [
  'terminal-snr-leak',
  'epsilon-at-zero-snr',
  'sampler-skips-last-step',
  'few-steps-linspace',
  'guidance-overexposure',
  'offset-noise-conflict',
  'train-sample-mismatch',
  'min-snr-division',
];

/** Stated in the preview, the command output, the LSP annotation and the docs. */
export const RUN_CAUTIONS: readonly string[] = [
  'A pretrained checkpoint must be fine-tuned after the schedule or target change (Lin et al. 2023 fine-tune for this). Until then, sampling with the new schedule gives worse images, not better ones.',
  'Sampling-only changes (spacing, guidance rescale) are safe to apply alone: limit the operation to them to change nothing the model learns.',
];

export type RunSide = 'training' | 'sampling' | 'alone';

export interface RunFileInput {
  /** As messages and the diff name it. */
  path: string;
  /** Read as check reads it (a sampling file with its training partner). */
  reading: FileReading;
  side: RunSide;
}

export interface RunOptions {
  samplingOnly?: boolean;
  /** Reader answers per document (reader profiles); the generic reading by default. */
  answersFor?: (setup: Setup) => ReaderAnswers;
}

export interface DocumentChange {
  documentIndex: number;
  edits: ConceptEdit[];
  /** One line per change, e.g. "rescale the schedule to zero terminal SNR (needs fine-tuning)". */
  what: string[];
}

export interface RunFilePlan {
  path: string;
  side: RunSide;
  changes: DocumentChange[];
  /** Null when the edits could not be written without breaking the text or losing a comment. */
  textEdits: TextEdit[] | null;
}

export interface BeforeAfter {
  before: number | null;
  after: number | null;
}

export interface RunNumbers {
  path: string;
  documentIndex: number;
  terminalSnr: BeforeAfter;
  /** sqrt(abar) at the last training step. */
  terminalSignal: BeforeAfter;
  firstTimestep: BeforeAfter;
  snrAtFirst: BeforeAfter;
  guidanceRescale: BeforeAfter;
  /** sigma at the first sampled step for sigma-space samplers (Infinity at zero SNR). */
  firstSigma?: BeforeAfter;
}

export interface RunPlan {
  files: RunFilePlan[];
  numbers: RunNumbers[];
  /** What the operation cannot write and the sampling code must do (sigma-space samplers). */
  notes: string[];
  cautions: readonly string[];
  /** The plan changes the schedule or the target: the model needs fine-tuning. */
  changesTraining: boolean;
  /** No file changes: the run is already there (or nothing applies). */
  empty: boolean;
  /** Files whose edits could not be rendered; the plan must not be applied when non-empty. */
  blocked: string[];
}

type Params = Omit<ScheduleParams, 'rescaleZeroSnr'>;

/** What the plan reads of one document (the engine's DocumentResult has this shape). */
export interface DocumentResult {
  index: number;
  setup: Setup;
  analysis: Analysis;
}

/** What the plan reads of one file (the engine's FileReading has this shape). */
export interface FileReading {
  parsed: ParsedFile;
  documents: DocumentResult[];
}

/** Schedule parameters of a discrete setup (inherited values included), or null. */
function paramsOf(setup: Setup): Params | null {
  const T = setup.fields.trainSteps?.value;
  if (T === undefined) return null;
  const betas = setup.fields.betas?.value;
  if (betas) return { kind: 'explicit', trainSteps: T, betas };
  const kind = setup.fields.betaSchedule?.value;
  if (!kind) return null;
  return { kind, trainSteps: T, betaStart: setup.fields.betaStart?.value, betaEnd: setup.fields.betaEnd?.value };
}

function numbersOf(params: Params | null, rescale: boolean): ScheduleNumbers | null {
  if (!params) return null;
  const r = computeSchedule({ ...params, rescaleZeroSnr: rescale });
  return r.ok ? r.value : null;
}

/** The document is on the training side of its run (it owns the schedule the model learns). */
function ownsSchedule(doc: DocumentResult, side: RunSide): boolean {
  if (side === 'training') return doc.setup.role !== 'sampling';
  if (side === 'alone') return true;
  return false;
}

function samples(setup: Setup): boolean {
  return setup.role !== 'training' && (!!setup.fields.sampleSteps || !!setup.fields.timestepSpacing?.source);
}

/** True when the file itself writes the concept (not assumed, not inherited). */
function writes(setup: Setup, c: Concept): boolean {
  const f = setup.fields[c];
  return !!f && !f.assumed && !!f.source && !f.inherited;
}

function setEdit<C extends Concept>(concept: C, value: ConceptValues[C]): ConceptEdit {
  return { kind: 'set', concept, value };
}

const ALIGNED: readonly Concept[] = ['trainSteps', 'betaSchedule', 'betaStart', 'betaEnd', 'betas', 'zeroTerminalSnr', 'predictionTarget'];

interface TrainingAfter {
  path: string;
  setup: Setup;
  params: Params | null;
  rescaled: boolean;
  /** Values after the plan, for aligning sampling files. */
  values: Partial<Record<Concept, ConceptValues[Concept]>>;
}

function sameValue(a: unknown, b: unknown): boolean {
  if (Array.isArray(a) && Array.isArray(b))
    return a.length === b.length && a.every((x, i) => Math.abs(x - b[i]) <= 1e-12 * Math.max(Math.abs(x), Math.abs(b[i])));
  if (typeof a === 'number' && typeof b === 'number') return a === b || Math.abs(a - b) <= 1e-9 * Math.max(Math.abs(a), Math.abs(b));
  return a === b;
}

/** Collects a document's edits, leaving out what its reader cannot take (with a note saying what to change instead). */
class ChangeBuilder {
  readonly change: DocumentChange;
  constructor(
    private readonly doc: DocumentResult,
    private readonly answers: ReaderAnswers,
    private readonly notes: string[],
    private readonly path: string,
  ) {
    this.change = { documentIndex: doc.index, edits: [], what: [] };
  }
  /** Adds the edits with their line; false (and a note) when the reader cannot take one of them. */
  add(what: string, ...edits: ConceptEdit[]): boolean {
    for (const e of edits) {
      if (e.kind !== 'set') continue;
      const hint = this.answers.cannot(this.doc.setup, e.concept);
      if (hint !== null) {
        this.note(hint);
        return false;
      }
    }
    this.change.edits.push(...edits);
    if (what) this.change.what.push(what);
    return true;
  }
  note(text: string): void {
    const line = `${this.path}: ${text}`;
    if (!this.notes.includes(line)) this.notes.push(line);
  }
}

/** The training side's changes (schedule, target, offset noise) of one document. */
function trainingChanges(
  doc: DocumentResult,
  answers: ReaderAnswers,
  samplingOnly: boolean,
  notes: string[],
  path: string,
): { change: DocumentChange; after: TrainingAfter | null } {
  const { setup, analysis } = doc;
  const out = new ChangeBuilder(doc, answers, notes, path);
  const schedule = analysis.schedule;
  const params = schedule?.family === 'discrete' ? paramsOf(setup) : null;
  const values: TrainingAfter['values'] = {};
  for (const c of ALIGNED) if (setup.fields[c]) values[c] = setup.fields[c].value;
  // A document that writes no schedule field holds nothing to rescale (its schedule is elsewhere).
  const hasOwnSchedule = (['betaSchedule', 'betas', 'betaStart', 'betaEnd', 'trainSteps', 'zeroTerminalSnr'] as const).some((c) => writes(setup, c));
  let rescaled = schedule?.rescaleApplied === true || schedule?.reachesZeroSnr === true;
  if (!samplingOnly && schedule?.family === 'discrete' && params && hasOwnSchedule && !rescaled) {
    const how = answers.zeroSnrWrite(setup);
    if (how === 'betas' && analysis.rescaled) {
      const list = Array.from(analysis.rescaled.betas, fmtValue);
      const key = setup.consumer?.insertKeys?.betas;
      const what =
        params.kind === 'explicit'
          ? 'replace the beta list with its zero-terminal-SNR rescale (Lin et al. 2023, Algorithm 1)'
          : `pass the zero-terminal-SNR rescale of the schedule as the explicit beta list${key ? ` ${key}` : ''} (Lin et al. 2023, Algorithm 1)`;
      if (out.add(what, setEdit('betas', list))) {
        values.betas = list;
        rescaled = true;
      }
    } else if (how === 'flag') {
      if (out.add('rescale the schedule to zero terminal SNR (Lin et al. 2023, Algorithm 1)', setEdit('zeroTerminalSnr', true))) {
        values.zeroTerminalSnr = true;
        rescaled = true;
      }
    } else {
      out.note(answers.cannot(setup, 'zeroTerminalSnr') ?? 'the schedule cannot be rescaled in this file');
    }
  }
  const target = setup.fields.predictionTarget?.value;
  if (
    !samplingOnly &&
    schedule?.family === 'discrete' &&
    rescaled &&
    (target === undefined || target === 'epsilon') &&
    !setup.fields.predictionTarget?.inherited
  ) {
    if (out.add('switch the prediction target to velocity (Salimans & Ho 2022)', setEdit('predictionTarget', 'v'))) values.predictionTarget = 'v';
  }
  const offset = setup.fields.offsetNoise;
  if (!samplingOnly && offset && offset.source && !offset.assumed && offset.value > 0) {
    out.add('remove offset noise (its comment stays)', { kind: 'remove', concept: 'offsetNoise', keepComment: true });
  }
  const after: TrainingAfter | null = params ? { path: '', setup, params, rescaled, values } : null;
  return { change: out.change, after };
}

/** The sampling side's changes of one document: alignment, spacing, guidance rescale, sigma bound. */
function samplingChanges(
  doc: DocumentResult,
  training: TrainingAfter | null,
  answers: ReaderAnswers,
  notes: string[],
  path: string,
  rescaledAfter: boolean,
  paramsAfter: Params | null,
): DocumentChange {
  const { setup, analysis } = doc;
  const out = new ChangeBuilder(doc, answers, notes, path);
  if (training) {
    for (const c of ALIGNED) {
      if (!writes(setup, c)) continue;
      const want = training.values[c];
      if (want === undefined || sameValue(setup.fields[c]!.value, want)) continue;
      out.add(`align ${c} with the training file ${training.path}`, setEdit(c, want));
    }
  }
  const sampling = analysis.sampling;
  if (sampling && analysis.schedule?.family === 'discrete' && samples(setup)) {
    const spacing = setup.fields.timestepSpacing?.value;
    if (answers.spacingWrite(setup) === 'trailing' && spacing !== 'trailing') {
      const T = paramsAfter?.trainSteps ?? analysis.schedule.trainSteps;
      if (out.add('set the timestep spacing to trailing (Lin et al. 2023, section 3.3)', setEdit('timestepSpacing', 'trailing'))) {
        const withOffset = samplingTimesteps('trailing', T, sampling.steps, sampling.stepsOffset);
        const inRange = withOffset.ok && withOffset.value.every((t) => t >= 0 && t <= T - 1);
        if (!inRange && sampling.stepsOffset !== 0 && writes(setup, 'stepsOffset')) {
          out.add('set the steps offset to 0 (trailing with the offset would pass the last step)', setEdit('stepsOffset', 0));
        }
      }
    }
  }
  const scale = setup.fields.guidanceScale;
  const rescale = setup.fields.guidanceRescale;
  if (scale && !scale.assumed && scale.value > 1 && !(rescale && !rescale.assumed && rescale.value > 0)) {
    out.add(
      `set guidance rescale ${RUN_GUIDANCE_RESCALE} (Lin et al. 2023, eqs. 13-16; common practice)`,
      setEdit('guidanceRescale', RUN_GUIDANCE_RESCALE),
    );
  }
  if (rescaledAfter && isSigmaSpaceSampler(setup)) {
    const bound = answers.sigmaBound(setup);
    if (bound.kind === 'settings') {
      const edits = bound.writes.filter((w) => !(sameValue(setup.fields[w.concept]?.value, w.value) && writes(setup, w.concept)));
      out.add(bound.note, ...edits.map((w) => setEdit(w.concept, w.value)));
    } else {
      const who = setup.fields.sampler?.value ? `the ${setup.fields.sampler.value} sampler` : 'the sampler';
      notes.push(
        `${path}: ${who} steps in sigma, which is infinite at the last step of the rescaled schedule; the sampling code must ${bound.instruction}.`,
      );
    }
  }
  return out.change;
}

function ba(before: number | undefined | null, after: number | undefined | null): BeforeAfter {
  const v = (x: number | undefined | null) => (x === undefined || x === null || Number.isNaN(x) ? null : x);
  return { before: v(before), after: v(after) };
}

/** Numbers of one document before and after the plan, computed with shared-math. */
function numbersFor(path: string, doc: DocumentResult, paramsAfter: Params | null, rescaledAfter: boolean, edits: ConceptEdit[]): RunNumbers | null {
  const { setup, analysis } = doc;
  const schedule = analysis.schedule;
  if (!schedule || schedule.family !== 'discrete') return null;
  const before = analysis;
  const afterNumbers = numbersOf(paramsAfter, rescaledAfter);
  const setTo = <C extends Concept>(c: C): ConceptValues[C] | undefined => {
    const e = edits.find((x) => x.kind === 'set' && x.concept === c);
    return e && e.kind === 'set' ? (e.value as ConceptValues[C]) : undefined;
  };
  let firstAfter: number | undefined;
  let snrFirstAfter: number | undefined;
  let sigmaFirstAfter: number | undefined;
  if (before.sampling && afterNumbers) {
    const spacing = setTo('timestepSpacing') ?? before.sampling.spacing;
    const offset = setTo('stepsOffset') ?? before.sampling.stepsOffset;
    if (spacing !== 'flow' && spacing !== 'karras') {
      const ts = samplingTimesteps(spacing, afterNumbers.alphaBar.length, before.sampling.steps, offset);
      if (ts.ok) {
        firstAfter = ts.value[0]!;
        const abar = afterNumbers.alphaBar[firstAfter];
        if (abar !== undefined) {
          snrFirstAfter = snrFromAlphaBar(abar);
          sigmaFirstAfter = sigmaFromAlphaBar(abar);
        }
      }
    }
  }
  const phiBefore = setup.fields.guidanceRescale?.value;
  const phiAfter = setTo('guidanceRescale') ?? phiBefore;
  const out: RunNumbers = {
    path,
    documentIndex: doc.index,
    terminalSnr: ba(schedule.terminalSnr, afterNumbers?.terminalSnr),
    terminalSignal: ba(schedule.terminalSignal, afterNumbers?.terminalSignal),
    firstTimestep: ba(before.sampling?.firstTimestep, firstAfter),
    snrAtFirst: ba(before.sampling?.snrAtFirst, snrFirstAfter),
    guidanceRescale: ba(setup.fields.guidanceScale ? (phiBefore ?? 0) : null, setup.fields.guidanceScale ? (phiAfter ?? 0) : null),
  };
  if (isSigmaSpaceSampler(setup) && before.sampling) {
    const t0 = before.sampling.firstTimestep;
    const abar0 = Number.isInteger(t0) ? schedule.curve.alphaBar[t0] : undefined;
    out.firstSigma = { before: abar0 === undefined ? null : sigmaFromAlphaBar(abar0), after: sigmaFirstAfter ?? null };
  }
  return out;
}

/** The plan for a run. Never throws on odd input: a document it cannot read is left as it is. */
export function planRunRescale(files: readonly RunFileInput[], options: RunOptions = {}): RunPlan {
  const samplingOnly = options.samplingOnly === true;
  const answersFor = options.answersFor ?? readerAnswersFor;
  const notes: string[] = [];
  const plans: RunFilePlan[] = [];
  const numbers: RunNumbers[] = [];
  const blocked: string[] = [];

  // The training side first: its values after the plan are what the sampling side aligns with.
  let training: TrainingAfter | null = null;
  const trainingChangesByFile = new Map<RunFileInput, DocumentChange[]>();
  for (const file of files) {
    if (file.side === 'sampling') continue;
    const changes: DocumentChange[] = [];
    for (const doc of file.reading.documents) {
      if (!doc.setup.isDiffusionConfig || !ownsSchedule(doc, file.side)) continue;
      const { change, after } = trainingChanges(doc, answersFor(doc.setup), samplingOnly, notes, file.path);
      changes.push(change);
      if (after && file.side === 'training' && !training) training = { ...after, path: file.path };
    }
    trainingChangesByFile.set(file, changes);
  }

  for (const file of files) {
    const byDoc = new Map<number, DocumentChange>();
    for (const c of trainingChangesByFile.get(file) ?? []) byDoc.set(c.documentIndex, c);
    for (const doc of file.reading.documents) {
      const setup = doc.setup;
      if (!setup.isDiffusionConfig) continue;
      const own = byDoc.get(doc.index);
      const partner = file.side === 'sampling' ? training : null;
      const paramsAfter = partner?.params ?? paramsOf(setup);
      const rescaledAfter = samplingOnly
        ? partner
          ? partner.setup.fields.zeroTerminalSnr?.value === true || !!doc.analysis.schedule?.reachesZeroSnr
          : !!doc.analysis.schedule?.rescaleApplied || !!doc.analysis.schedule?.reachesZeroSnr
        : partner
          ? partner.rescaled
          : own
            ? own.edits.some((e) => e.kind === 'set' && (e.concept === 'zeroTerminalSnr' || e.concept === 'betas')) ||
              !!doc.analysis.schedule?.rescaleApplied ||
              !!doc.analysis.schedule?.reachesZeroSnr
            : !!doc.analysis.schedule?.rescaleApplied;
      const change = own ?? { documentIndex: doc.index, edits: [], what: [] };
      if (setup.role !== 'training') {
        const s = samplingChanges(doc, partner, answersFor(setup), notes, file.path, rescaledAfter, paramsAfter);
        change.edits.push(...s.edits);
        change.what.push(...s.what);
      }
      if (change.edits.length > 0 && !byDoc.has(doc.index)) byDoc.set(doc.index, change);
      // An explicit list is rescaled from the original list: the written list is that, to 6 digits.
      const row = numbersFor(file.path, doc, paramsAfter, rescaledAfter, change.edits);
      if (row) numbers.push(row);
    }
    const changes = [...byDoc.values()].filter((c) => c.edits.length > 0).sort((a, b) => a.documentIndex - b.documentIndex);
    let textEdits: TextEdit[] | null = [];
    for (const c of changes) {
      const doc = file.reading.documents.find((d) => d.index === c.documentIndex);
      const rendered = doc ? safeRender(file.reading, doc.setup, c.edits) : null;
      if (!rendered) {
        textEdits = null;
        break;
      }
      textEdits.push(...rendered);
    }
    if (textEdits === null) blocked.push(file.path);
    plans.push({ path: file.path, side: file.side, changes, textEdits: textEdits && sortEdits(textEdits) });
  }
  const learns = (e: ConceptEdit) =>
    e.kind === 'remove' || e.concept === 'zeroTerminalSnr' || e.concept === 'betas' || e.concept === 'predictionTarget';
  const changesTraining = plans.some((p) => p.side !== 'sampling' && p.changes.some((c) => c.edits.some(learns)));
  return {
    files: plans,
    numbers,
    notes,
    cautions: RUN_CAUTIONS,
    changesTraining,
    empty: plans.every((p) => p.changes.length === 0),
    blocked,
  };
}

function safeRender(reading: FileReading, setup: Setup, edits: ConceptEdit[]): TextEdit[] | null {
  try {
    return renderConceptEdits(reading.parsed, setup, edits);
  } catch {
    return null;
  }
}
