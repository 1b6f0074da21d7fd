/**
 * The engine's plain data: what one file reads to before the rules run (`FileReading`), the
 * same with its findings (`FileResult`), the options of a read, and the resolved project
 * settings the engine applies. Named once here; every stage above uses these names.
 */
import type { ParseOptions } from '../parse/parseText';
import type { Finding, Severity } from '../base/findings';
import type { ConsumerSetting } from '../consumers/types';
import type { Concept } from '../fields/concepts';
import type { ParsedFile, ParseLimits, SourceFormat } from '../parse/types';
import type { Setup } from '../setup/types';
import type { ScheduleInheritance } from '../setup/inherit';
import type { Analysis } from '../analysis/analysis';
import type { PartnerDocument } from '../rules/types';

/** Per-rule setting from the project file or editor settings. */
export interface RuleSetting {
  severity?: Severity | 'off';
  options?: Record<string, number | string | boolean>;
}

/** A training file and a sampling file that must agree (paths relative to the project root). */
export interface FilePair {
  training: string;
  sampling: string;
}

/**
 * The project file (`noiselint.project.yaml` or `.json`), resolved: every field present, paths
 * absolute. Found by walking up from the checked file.
 */
export interface ResolvedProject {
  /** Absolute path of the project file, or null for built-in defaults. */
  file: string | null;
  /** Folder the globs and pair paths are relative to. */
  root: string;
  include: string[];
  exclude: string[];
  rules: Record<string, RuleSetting>;
  aliases: Partial<Record<Concept, string[]>>;
  /** Default for the latentSpace concept when a file does not say. */
  latentSpace?: boolean;
  pairs: FilePair[];
  /** Pair a training and a sampling file in the same folder automatically. */
  autoPair: boolean;
  limits: Partial<ParseLimits>;
  /** Consumer and loader per glob (consumer profile stage); the first matching entry decides. */
  consumers?: ConsumerSetting[];
}

export interface AnalyzeOptions {
  /** Path or URI, for format detection and messages. */
  path: string;
  format?: SourceFormat;
  /** Project file settings (rule severities and options, aliases, limits). */
  project?: ResolvedProject;
  /** Documents of the paired training or sampling file (train-sample-mismatch). */
  partners?: PartnerDocument[];
  pairRole?: 'training' | 'sampling';
  /**
   * What a sampling file takes from its training partner (setup/inherit.ts). Derived from
   * `partners` and `pairRole` when absent; pass it (or null) to read again without the partners.
   */
  inherit?: ScheduleInheritance | null;
  limits?: Partial<ParseLimits>;
  /** How the text is parsed: what scalars mean, or the exact YAML reader only (tests). */
  parse?: ParseOptions;
}

export interface DocumentResult {
  index: number;
  setup: Setup;
  analysis: Analysis;
}

/** One file read to its documents' setups and analyses, before the rules run. */
export interface FileReading {
  path: string;
  parsed: ParsedFile;
  documents: DocumentResult[];
  /** At least one document is a diffusion config. */
  isDiffusionConfig: boolean;
  /** The training partner's values the documents were read with, if any. */
  inheritance?: ScheduleInheritance | null;
}

/** A reading with its findings. */
export interface FileResult extends FileReading {
  /** Sorted by position. */
  findings: Finding[];
}
