import type { Span } from './span';

/** Finding severities, most severe first. 'hint' is the LSP's faintest level. */
export type Severity = 'error' | 'warning' | 'info' | 'hint';
export const SEVERITIES: readonly Severity[] = ['error', 'warning', 'info', 'hint'];

/** Replace `span` of the document text with `newText` (offsets are UTF-16 code units). */
export interface TextEdit {
  span: Span;
  newText: string;
}

/**
 * What applying a fix does to a model already trained with the file:
 * 'sampling-only': changes only how the trained model is sampled (spacing, step count, guidance),
 *   or writes the spelling a loader accepts for the value the file already means; the checkpoint
 *   stays valid.
 * 'needs-retraining': changes what the model learns (schedule, target, loss weighting, offset
 *   noise); the checkpoint needs fine-tuning or retraining. Applied on request only.
 */
export type FixEffect = 'sampling-only' | 'needs-retraining';
export const FIX_EFFECTS: readonly FixEffect[] = ['sampling-only', 'needs-retraining'];

export interface FixProposal {
  title: string;
  effect: FixEffect;
  /** An edit replaces or deletes part of a comment the user wrote; applied on request only. */
  touchesComment: boolean;
  /** The best fix of a finding; at most one per finding. */
  preferred: boolean;
  edits: TextEdit[];
}

export interface RelatedLocation {
  /** Absent for the same file. */
  path?: string;
  span: Span;
  message: string;
}

export interface Finding {
  rule: string;
  severity: Severity;
  message: string;
  /** The field that causes it; or the nearest enclosing key; or the first line. */
  span: Span;
  documentIndex: number;
  related: RelatedLocation[];
  fixes: FixProposal[];
}
