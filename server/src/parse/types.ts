/** Located tree: every key and value knows where it sits in the source text. */
export type SourceFormat = 'yaml' | 'json' | 'jsonc' | 'toml';

import type { Span } from '../base/span';

export type { Span } from '../base/span';

export type ScalarValue = string | number | boolean | null;

export interface LocatedScalar {
  kind: 'scalar';
  /** Parsed value (YAML 1.2 core schema / JSON). Big integers become numbers (maybe Infinity). */
  value: ScalarValue;
  /** Exact source text of the value, including quotes. */
  raw: string;
  /** How the value is written: used to keep quoting style when a fix rewrites it. */
  style: 'plain' | 'single' | 'double' | 'block';
  span: Span;
}

export interface LocatedEntry {
  key: string;
  keySpan: Span;
  /** null for `key:` with no value. */
  value: LocatedNode | null;
  /**
   * When the value is written as a YAML alias (`key: *name`): the span of the alias text. `value`
   * is then the anchored node itself (shared), whose span points at the anchor.
   */
  aliasSpan?: Span;
  /**
   * TOML entries written by a `key = value` line: where the whole (maybe dotted) key starts, and
   * whether the line sits inside an inline table. Absent on tables made by headers or by the
   * leading segments of a dotted key.
   */
  tomlKey?: { start: number; inline: boolean };
  /** From the start of the key to the end of the value (no trailing comment or newline). */
  span: Span;
}

export interface LocatedMap {
  kind: 'map';
  entries: LocatedEntry[];
  style: 'block' | 'flow';
  span: Span;
}

export interface LocatedList {
  kind: 'list';
  items: LocatedNode[];
  style: 'block' | 'flow';
  span: Span;
}

export type LocatedNode = LocatedScalar | LocatedMap | LocatedList;

export interface ParsedDocument {
  /** 0-based index of the document in a multi-document YAML file; 0 for JSON and TOML. */
  index: number;
  root: LocatedNode | null;
  span: Span;
}

export interface ParseProblem {
  message: string;
  span: Span;
  severity: 'error' | 'warning';
  /**
   * Short machine-readable code: 'yaml-syntax', 'yaml-warning', 'json-syntax', 'json-comment',
   * 'json-trailing-comma', 'toml-syntax', 'too-large', 'too-deep', 'too-long', 'alias-limit', 'alias-cycle',
   * 'custom-tag', 'tag-mismatch', 'duplicate-key', 'bad-suppression', 'internal-error', 'json-non-finite'.
   */
  code: string;
}

/** A `noiselint: deliberate ...` comment (see suppressions.ts). */
export interface Suppression {
  /**
   * 'next-line' suppresses findings that start on `targetLine`; 'file' suppresses everywhere.
   * (`targetLine` is usually `line + 1`, but skips further comment lines, and equals `line` for a
   * comment at the end of a line of content.)
   */
  scope: 'next-line' | 'file';
  /** 0-based line of the comment. */
  line: number;
  /** 0-based line whose findings a 'next-line' suppression silences. */
  targetLine: number;
  /** Rule ids (lower case), or ['*'] for all rules. */
  rules: string[];
  /** Each rule id as written, with its place in the text (the engine reports ids that name no rule). */
  ids: { id: string; span: Span }[];
  /** The text after `because`, when given. */
  reason?: string;
}

export interface ParsedFile {
  format: SourceFormat;
  text: string;
  documents: ParsedDocument[];
  problems: ParseProblem[];
  lineEnding: '\n' | '\r\n' | '\r';
  /** True when the text starts with U+FEFF. Offsets still count it. */
  bom: boolean;
  suppressions: Suppression[];
  /**
   * Every comment of the file (`#`, `//` or block comments, markers included), sorted by start,
   * as the parse saw them. Fixes use them to avoid or report edits that touch a comment. Absent
   * on hand-made ParsedFiles (fix/comments.ts then reads them from a parse of the text).
   */
  comments?: Span[];
}

/** Limits that keep parsing bounded; documented user settings. */
export interface ParseLimits {
  maxFileBytes: number;
  maxNesting: number;
  maxListLength: number;
  /** Upper bound on YAML alias expansion (alias-bomb guard). */
  maxAliasCount: number;
}

export const DEFAULT_PARSE_LIMITS: ParseLimits = {
  maxFileBytes: 5 * 1024 * 1024,
  maxNesting: 256,
  maxListLength: 200_000,
  maxAliasCount: 1_000,
};
