/**
 * Glob and .gitignore matching in time bounded by the sizes involved, for patterns from untrusted
 * trees (project include/exclude, .gitignore lines, command-line globs).
 *
 * Regular-expression matchers backtrack: `*a*a*…*b` against a long name, or `a/**\/a/**\/…/b`
 * against a deep path, takes exponential time. Here a path is matched segment by segment with a
 * table over (pattern segment, path segment) for `**`, and each segment with the linear
 * "last star" scan for `*`, so a match costs at most (pattern length x path length) steps. On top
 * of that, patterns are bounded: at most MAX_PATTERN_LENGTH characters, MAX_WILDCARDS wildcards
 * and MAX_ALTERNATIVES brace alternatives; a pattern over a bound is refused (GlobError) and the
 * caller reports it in one line.
 *
 * Syntax: `*` (within a segment), `**` (a whole segment: any number of segments), `?`, classes
 * `[abc]` `[a-z]` `[!x]` `[^x]`, braces `{a,b}` (nested), `\` escapes. Without `dot`, wildcards
 * do not match a leading `.` of a segment.
 */

export const MAX_PATTERN_LENGTH = 1024;
export const MAX_WILDCARDS = 64;
export const MAX_ALTERNATIVES = 64;
/** Patterns used from one .gitignore file; the rest is ignored with a warning. */
export const MAX_IGNORE_PATTERNS = 1_000;

export class GlobError extends Error {}

type Token = { kind: 'lit'; ch: string } | { kind: 'any' } | { kind: 'star' } | { kind: 'class'; negated: boolean; ranges: [string, string][] };
type Segment = { kind: 'globstar' } | { kind: 'seg'; tokens: Token[]; literalDot: boolean };

export interface GlobOptions {
  /** Wildcards match a leading dot (default false). */
  dot?: boolean;
}

/** True when the text has glob syntax (an unescaped `*`, `?`, `[` or `{`). */
export function hasGlobSyntax(text: string): boolean {
  for (let i = 0; i < text.length; i++) {
    const c = text[i];
    if (c === '\\') i++;
    else if (c === '*' || c === '?' || c === '[' || c === '{') return true;
  }
  return false;
}

/** The folders before the first segment with glob syntax (`configs/**\/*.yaml` -> `configs`). */
export function globBase(pattern: string): string {
  const segments = pattern.replace(/\\(?![*?[\]{}])/g, '/').split('/');
  const first = segments.findIndex((s) => hasGlobSyntax(s));
  if (first < 0) return segments.slice(0, -1).join('/') || '.';
  return segments.slice(0, first).join('/') || (pattern.startsWith('/') ? '/' : '.');
}

/** Checks the bounds and the syntax; throws GlobError with a one-line reason. */
export function checkGlob(pattern: string): void {
  compileAlternatives(pattern);
}

/** A matcher for one pattern or any of several (a path matches when one of them matches). */
export function compileGlob(patterns: string | readonly string[], options: GlobOptions = {}): (path: string) => boolean {
  const list = typeof patterns === 'string' ? [patterns] : patterns;
  const compiled = list.flatMap((p) => compileAlternatives(p));
  const dot = options.dot ?? false;
  return (path) => {
    const parts = splitPath(path);
    return compiled.some((segments) => matchSegments(segments, parts, dot));
  };
}

function compileAlternatives(pattern: string): Segment[][] {
  if (pattern.length > MAX_PATTERN_LENGTH) throw new GlobError(`pattern is ${pattern.length} characters long; at most ${MAX_PATTERN_LENGTH}`);
  let wildcards = 0;
  for (let i = 0; i < pattern.length; i++) {
    const c = pattern[i];
    if (c === '\\') i++;
    else if (c === '*' || c === '?' || c === '[') wildcards++;
  }
  if (wildcards > MAX_WILDCARDS) throw new GlobError(`pattern has ${wildcards} wildcards; at most ${MAX_WILDCARDS}`);
  return expandBraces(pattern).map(compileOne);
}

/** `{a,b}c` -> `ac`, `bc` (nested, escapes kept), at most MAX_ALTERNATIVES results. */
function expandBraces(pattern: string): string[] {
  let open = -1;
  let depth = 0;
  for (let i = 0; i < pattern.length; i++) {
    const c = pattern[i];
    if (c === '\\') {
      i++;
      continue;
    }
    if (c === '[') {
      // A class may hold braces: skip it.
      const close = classEnd(pattern, i);
      if (close > 0) i = close;
      continue;
    }
    if (c === '{') {
      if (depth === 0) open = i;
      depth++;
    } else if (c === '}' && depth > 0) {
      depth--;
      if (depth === 0) {
        const parts = splitTopLevel(pattern.slice(open + 1, i));
        if (parts.length < 2) continue; // `{x}` is literal, as in most shells
        const before = pattern.slice(0, open);
        const after = pattern.slice(i + 1);
        const out: string[] = [];
        for (const part of parts) {
          for (const tail of expandBraces(part + after)) {
            out.push(before + tail);
            if (out.length > MAX_ALTERNATIVES) throw new GlobError(`braces expand to more than ${MAX_ALTERNATIVES} patterns`);
          }
        }
        return out;
      }
    }
  }
  return [pattern];
}

function splitTopLevel(s: string): string[] {
  const parts: string[] = [];
  let depth = 0;
  let start = 0;
  for (let i = 0; i < s.length; i++) {
    const c = s[i];
    if (c === '\\') i++;
    else if (c === '{') depth++;
    else if (c === '}') depth--;
    else if (c === ',' && depth === 0) {
      parts.push(s.slice(start, i));
      start = i + 1;
    }
  }
  parts.push(s.slice(start));
  return parts;
}

/** Index of the `]` closing the class that opens at `open`, or -1 when it is not a class. */
function classEnd(p: string, open: number): number {
  let i = open + 1;
  if (p[i] === '!' || p[i] === '^') i++;
  if (p[i] === ']') i++;
  for (; i < p.length; i++) {
    if (p[i] === '\\') i++;
    else if (p[i] === ']') return i;
    else if (p[i] === '/') return -1;
  }
  return -1;
}

function compileOne(pattern: string): Segment[] {
  const body = pattern.startsWith('./') ? pattern.slice(2) : pattern;
  const segments: Segment[] = [];
  for (const raw of splitPattern(body)) {
    if (raw === '**') {
      if (segments[segments.length - 1]?.kind !== 'globstar') segments.push({ kind: 'globstar' });
      continue;
    }
    segments.push({ kind: 'seg', tokens: tokenize(raw), literalDot: raw.startsWith('.') || raw.startsWith('\\.') });
  }
  return segments;
}

/** Splits on `/` outside classes; a trailing `/` adds nothing. */
function splitPattern(p: string): string[] {
  const out: string[] = [];
  let cur = '';
  for (let i = 0; i < p.length; i++) {
    const c = p[i];
    if (c === '\\' && i + 1 < p.length) {
      cur += c + p[++i];
    } else if (c === '[') {
      const close = classEnd(p, i);
      if (close > 0) {
        cur += p.slice(i, close + 1);
        i = close;
      } else cur += c;
    } else if (c === '/') {
      if (cur !== '' || out.length === 0) out.push(cur);
      cur = '';
    } else cur += c;
  }
  if (cur !== '') out.push(cur);
  return out;
}

function tokenize(seg: string): Token[] {
  const tokens: Token[] = [];
  for (let i = 0; i < seg.length; i++) {
    const c = seg[i]!;
    if (c === '\\' && i + 1 < seg.length) tokens.push({ kind: 'lit', ch: seg[++i]! });
    else if (c === '*') {
      if (tokens[tokens.length - 1]?.kind !== 'star') tokens.push({ kind: 'star' });
    } else if (c === '?') tokens.push({ kind: 'any' });
    else if (c === '[') {
      const close = classEnd(seg, i);
      if (close < 0) {
        tokens.push({ kind: 'lit', ch: c });
        continue;
      }
      let j = i + 1;
      let negated = false;
      if (seg[j] === '!' || seg[j] === '^') {
        negated = true;
        j++;
      }
      const ranges: [string, string][] = [];
      let first = true;
      while (j < close || (first && seg[j] === ']')) {
        first = false;
        let lo = seg[j]!;
        if (lo === '\\') lo = seg[++j]!;
        j++;
        if (seg[j] === '-' && j + 1 < close) {
          let hi = seg[j + 1]!;
          j += 2;
          if (hi === '\\') hi = seg[j++]!;
          ranges.push([lo, hi]);
        } else ranges.push([lo, lo]);
      }
      tokens.push({ kind: 'class', negated, ranges });
      i = close;
    } else tokens.push({ kind: 'lit', ch: c });
  }
  return tokens;
}

function splitPath(path: string): string[] {
  return path.split('/').filter((p) => p !== '' && p !== '.');
}

function tokenMatches(t: Token, ch: string): boolean {
  switch (t.kind) {
    case 'lit':
      return t.ch === ch;
    case 'any':
      return ch !== '/';
    case 'class': {
      const hit = t.ranges.some(([lo, hi]) => lo <= ch && ch <= hi);
      return t.negated ? !hit : hit;
    }
    default:
      return false;
  }
}

/** One pattern segment against one name: the linear scan that only ever retries the last star. */
function matchSegment(seg: Extract<Segment, { kind: 'seg' }>, name: string, dot: boolean): boolean {
  if (!dot && name.startsWith('.') && !seg.literalDot) return false;
  const tokens = seg.tokens;
  let t = 0;
  let n = 0;
  let starT = -1;
  let starN = 0;
  while (n < name.length) {
    if (t < tokens.length && tokens[t]!.kind !== 'star' && tokenMatches(tokens[t]!, name[n]!)) {
      t++;
      n++;
    } else if (t < tokens.length && tokens[t]!.kind === 'star') {
      starT = t++;
      starN = n;
    } else if (starT >= 0) {
      t = starT + 1;
      n = ++starN;
    } else return false;
  }
  while (t < tokens.length && tokens[t]!.kind === 'star') t++;
  return t === tokens.length;
}

/**
 * Pattern segments against path segments: reach[i] says pattern segments 0..i-1 can match path
 * segments 0..j-1 for the current j. A globstar takes any run of segments (without `dot`, none
 * that starts with a dot).
 */
function matchSegments(segments: Segment[], parts: string[], dot: boolean): boolean {
  const S = segments.length;
  let reach = new Uint8Array(S + 1);
  reach[0] = 1;
  for (let i = 0; i < S && segments[i]!.kind === 'globstar'; i++) reach[i + 1] = 1;
  for (let j = 0; j < parts.length; j++) {
    const next = new Uint8Array(S + 1);
    const name = parts[j]!;
    for (let i = 0; i < S; i++) {
      const seg = segments[i]!;
      if (seg.kind === 'globstar') {
        // The globstar at i takes this segment too (it was reached with or without it).
        if ((reach[i] || reach[i + 1]) && (dot || !name.startsWith('.'))) next[i + 1] = 1;
      } else if (reach[i] && matchSegment(seg, name, dot)) next[i + 1] = 1;
    }
    // A globstar may also take nothing after a match.
    for (let i = 0; i < S; i++) if (next[i] && segments[i]!.kind === 'globstar') next[i + 1] = 1;
    reach = next;
    let any = false;
    for (let i = 0; i <= S; i++) if (reach[i]) any = true;
    if (!any) return false;
  }
  return reach[S] === 1;
}

// ---------------------------------------------------------------------------------------------
// .gitignore

interface IgnoreRule {
  negated: boolean;
  dirOnly: boolean;
  match: (path: string) => boolean;
}

export interface IgnoreVerdict {
  ignored: boolean;
  unignored: boolean;
}

export interface IgnoreRules {
  /** Git's rule for one path relative to the file's folder (`dir/` for a folder). */
  test(path: string): IgnoreVerdict;
  /** One line each: patterns refused or left out (line numbers are 1-based). */
  warnings: string[];
}

/** Parses a .gitignore text (git's syntax; see gitignore(5)). Never throws. */
export function parseIgnore(text: string, name = '.gitignore'): IgnoreRules {
  const rules: IgnoreRule[] = [];
  const warnings: string[] = [];
  const lines = text.split(/\r?\n/);
  let refused = 0;
  let firstRefused = '';
  for (let n = 0; n < lines.length; n++) {
    let line = lines[n]!;
    if (line === '' || line.startsWith('#')) continue;
    // Trailing spaces are dropped unless escaped.
    line = line.replace(/(?<!\\)\s+$/, '');
    if (line === '') continue;
    if (rules.length >= MAX_IGNORE_PATTERNS) {
      warnings.push(`${name}: only the first ${MAX_IGNORE_PATTERNS} patterns are used (line ${n + 1} onwards left out)`);
      break;
    }
    let negated = false;
    if (line.startsWith('!')) {
      negated = true;
      line = line.slice(1);
    } else if (line.startsWith('\\!') || line.startsWith('\\#')) line = line.slice(1);
    let dirOnly = false;
    if (line.endsWith('/') && !line.endsWith('\\/')) {
      dirOnly = true;
      line = line.slice(0, -1);
    }
    if (line === '') continue;
    const anchored = line.includes('/');
    const glob = anchored ? line.replace(/^\//, '') : `**/${line}`;
    try {
      checkGlob(line); // the bounds, counted on what the user wrote
      rules.push({ negated, dirOnly, match: compileGlob(glob, { dot: true }) });
    } catch (err) {
      if (refused++ === 0) firstRefused = `${name}:${n + 1}: pattern refused: ${err instanceof Error ? err.message : String(err)}`;
    }
  }
  if (refused === 1) warnings.unshift(firstRefused);
  else if (refused > 1) warnings.unshift(`${firstRefused} (and ${refused - 1} more patterns refused)`);

  const verdictOf = (path: string, isDir: boolean): IgnoreVerdict => {
    for (let i = rules.length - 1; i >= 0; i--) {
      const r = rules[i]!;
      if (r.dirOnly && !isDir) continue;
      if (r.match(path)) return { ignored: !r.negated, unignored: r.negated };
    }
    return { ignored: false, unignored: false };
  };
  // Folders asked about again and again (every file below them): remembered, within a bound.
  const folderCache = new Map<string, boolean>();
  const folderIgnored = (dir: string): boolean => {
    let v = folderCache.get(dir);
    if (v === undefined) {
      v = verdictOf(dir, true).ignored;
      if (folderCache.size >= 10_000) folderCache.clear();
      folderCache.set(dir, v);
    }
    return v;
  };
  return {
    warnings,
    test(path) {
      const isDir = path.endsWith('/');
      const clean = isDir ? path.slice(0, -1) : path;
      // A file inside an ignored folder is ignored, whatever later rules say about the file.
      let slash = clean.indexOf('/');
      while (slash > 0) {
        if (folderIgnored(clean.slice(0, slash))) return { ignored: true, unignored: false };
        slash = clean.indexOf('/', slash + 1);
      }
      return verdictOf(clean, isDir);
    },
  };
}
