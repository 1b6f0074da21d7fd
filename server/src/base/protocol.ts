/**
 * noiselint's own protocol extensions, shared by the language server (server/src/lsp) and the
 * VS Code client. Plain data only: no LSP library types here.
 */

/** Request: plot data for one document. Params: PlotDataParams. Result: PlotData | null. */
export const PLOT_DATA_REQUEST = 'noiselint/plotData';
/** Request: the `explain` text for one document. Params: { uri }. Result: { text: string }. */
export const EXPLAIN_REQUEST = 'noiselint/explain';
/** Request: a one-line summary for the status item. Params: { uri }. Result: DocumentSummary. */
export const SUMMARY_REQUEST = 'noiselint/summary';
/** Notification server -> client: plot data of a document changed (so an open plot can refresh). */
export const PLOT_CHANGED_NOTIFICATION = 'noiselint/plotChanged';
/** Client command run by the "Show noise schedule" code lens; argument: the document uri string. */
export const SHOW_SCHEDULE_COMMAND = 'noiselint.showSchedule';
/** Code action kind that applies every sampling-only fix that touches no comment. */
export const FIX_ALL_KIND = 'source.fixAll.noiselint';

export interface UriParams {
  uri: string;
}

/**
 * Request: the run rescale of the run `uri` belongs to, as one workspace edit across its files
 * (each edit annotated: needs confirmation, the model needs fine-tuning). Result: RunRescaleResult
 * or null when the document is not part of a diffusion run.
 */
export const RUN_RESCALE_REQUEST = 'noiselint/runRescale';

export interface RunRescaleParams {
  uri: string;
  /** Only what changes how the model is sampled (spacing, guidance rescale, alignment). */
  samplingOnly?: boolean;
}

export interface RunRescaleResult {
  /** An LSP WorkspaceEdit (documentChanges with change annotations when the client has them). */
  edit: unknown;
  title: string;
  /** URIs of the files the edit changes. */
  uris: string[];
  /** One line per change, with the file it is in. */
  changes: string[];
  /** The before/after table (plain text). */
  numbers: string;
  /** What no file can express (the sampling code must do it). */
  notes: string[];
  cautions: string[];
  /** The edit changes what the model learns. */
  needsRetraining: boolean;
  empty: boolean;
}

export type PlotDataParams = UriParams;

export interface PlotCurve {
  /** log-SNR at each x; null where it is -Infinity (zero SNR) or +Infinity. */
  logSnr: (number | null)[];
  /** Signal amplitude sqrt(abar) at each x. */
  signal: number[];
}

export interface PlotSampledStep {
  /** Timestep (0-based code index for discrete schedules). */
  t: number;
  /** Position in the sampling order, 0 = first (noisiest). */
  order: number;
  logSnr: number | null;
  snr: number;
  signal: number;
  /** True when the step lies outside [0, T - 1]. */
  outOfRange: boolean;
}

export interface PlotDocument {
  /** Document index inside the file (multi-document YAML). */
  index: number;
  /** Short label, e.g. "scaled_linear, T = 1000, epsilon". */
  label: string;
  family: 'discrete' | 'flow' | 'karras';
  trainSteps: number;
  /** x positions: timesteps 0..T-1 (downsampled to at most ~1000 points for long schedules). */
  t: number[];
  current: PlotCurve;
  /** The same schedule after the zero-terminal-SNR rescale (Lin et al. 2023); null when not applicable. */
  rescaled: PlotCurve | null;
  sampled: PlotSampledStep[];
  terminalSnr: number;
  terminalSignal: number;
  /**
   * The noisy end the sampler never reaches: every training step above `lastVisited` (the
   * highest sampled step) up to `lastStep` = T - 1. Null when the sampler starts at T - 1 or
   * nothing is sampled.
   */
  skipped: PlotSkippedRange | null;
  /**
   * The tail window both plot views zoom into, where a terminal leak shows: x from `from` to the
   * last x, signal amplitude from 0 to `signalMax`.
   */
  tail: PlotTailWindow;
  /** Problems that stopped part of the computation (one line each). */
  problems: string[];
  /** The training file the schedule and target come from, when this file does not set them. */
  inheritedFrom?: string;
}

export interface PlotSkippedRange {
  lastVisited: number;
  lastStep: number;
  /** Training steps skipped: lastStep - lastVisited. */
  count: number;
}

export interface PlotTailWindow {
  from: number;
  to: number;
  signalMax: number;
}

export interface PlotData {
  uri: string;
  /** Document version the data was computed from. */
  version: number | null;
  documents: PlotDocument[];
}

export interface DocumentSummary {
  uri: string;
  isDiffusionConfig: boolean;
  /** Terminal SNR of the first diffusion document, when it could be computed. */
  terminalSnr: number | null;
  terminalSignal: number | null;
  errors: number;
  warnings: number;
  infos: number;
  /** 'clean' | 'warnings' | 'errors' | 'not-a-config' */
  state: 'clean' | 'warnings' | 'errors' | 'not-a-config';
}
