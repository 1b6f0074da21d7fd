/** Spelling-insensitive comparison of keys and enum values. */

/**
 * One key segment in comparable form: lower case, separators dropped, so that
 * `numTrainTimesteps`, `num_train_timesteps`, `num-train-timesteps` and `_class_name_` /
 * `className` compare equal.
 */
export function normalizeKeySegment(segment: string): string {
  return segment.toLowerCase().replace(/[^a-z0-9]/g, '');
}

/** A key or dotted alias as comparable segments (`model.params.timesteps` -> 3 segments). */
export function keySegments(key: string): string[] {
  return key
    .split('.')
    .map(normalizeKeySegment)
    .filter((s) => s.length > 0);
}

/**
 * keySegments, memoised: the same few hundred keys recur in every config, so a run normalises
 * each spelling once. The result is shared: callers must not change it. The memo is emptied when
 * it grows past its bound (a file of random keys cannot make it grow without limit).
 */
export function keySegmentsOf(key: string): readonly string[] {
  let segs = SEGMENTS_MEMO.get(key);
  if (segs === undefined) {
    if (SEGMENTS_MEMO.size >= SEGMENTS_MEMO_ENTRIES) SEGMENTS_MEMO.clear();
    segs = keySegments(key);
    SEGMENTS_MEMO.set(key, segs);
  }
  return segs;
}
const SEGMENTS_MEMO_ENTRIES = 20_000;
const SEGMENTS_MEMO = new Map<string, readonly string[]>();

/** normalizeKeySegment of a whole key (dots dropped too), memoised like keySegmentsOf. */
export function normalizedSegmentOf(key: string): string {
  let k = SEGMENT_MEMO.get(key);
  if (k === undefined) {
    if (SEGMENT_MEMO.size >= SEGMENTS_MEMO_ENTRIES) SEGMENT_MEMO.clear();
    k = normalizeKeySegment(key);
    SEGMENT_MEMO.set(key, k);
  }
  return k;
}
const SEGMENT_MEMO = new Map<string, string>();

/** The whole key in comparable form (segments joined by dots), memoised like keySegmentsOf. */
export function normalizedKeyOf(key: string): string {
  let k = NORMALIZED_MEMO.get(key);
  if (k === undefined) {
    if (NORMALIZED_MEMO.size >= SEGMENTS_MEMO_ENTRIES) NORMALIZED_MEMO.clear();
    k = key.split('.').map(normalizeKeySegment).join('.');
    NORMALIZED_MEMO.set(key, k);
  }
  return k;
}
const NORMALIZED_MEMO = new Map<string, string>();

/** An enum value in comparable form: lower case, `++` read as `pp`, separators dropped. */
export function normalizeValue(value: string): string {
  return value
    .toLowerCase()
    .replace(/\+\+/g, 'pp')
    .replace(/[^a-z0-9]/g, '');
}

export { editDistance } from '../base/nearest';

/** The largest distance at which a misspelling still earns a suggestion. */
export function suggestionThreshold(normalizedLength: number): number {
  if (normalizedLength <= 2) return 1;
  if (normalizedLength <= 5) return 1;
  return 2;
}

export type KeySpellingStyle = 'snake' | 'camel' | 'short';

/** True for keys written in camelCase (a lower-case letter or digit followed by an upper-case one). */
export function isCamelCase(key: string): boolean {
  return /[a-z0-9][A-Z]/.test(key) && !/[_-]/.test(key);
}

/** Renders a known spelling (written in snake_case) in the style of the value the user wrote. */
export function inStyleOf(spelling: string, written: string): string {
  let out = spelling;
  if (/-/.test(written) && !/_/.test(written)) out = out.replace(/_/g, '-');
  else if (/ /.test(written.trim()) && !/[_-]/.test(written)) out = out.replace(/_/g, ' ');
  if (written.length > 1 && written === written.toUpperCase() && /[A-Z]/.test(written)) out = out.toUpperCase();
  return out;
}
