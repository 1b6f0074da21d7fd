import type { Severity } from '../core/findings';
import type { Concept } from '../fields/concepts';
import type { ParseLimits } from '../parse/types';

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
}
