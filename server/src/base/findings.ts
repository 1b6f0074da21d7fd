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
 * 'safe': nothing the model learns changes and no comment is touched.
 * 'unsafe': changes the schedule, the target or a comment; applied on request only.
 */
export type FixSafety = 'safe' | 'unsafe';

export interface FixProposal {
  title: string;
  safety: FixSafety;
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
