/**
 * The CST pass of the YAML reader: comments and regions nested deeper than the limit, found with
 * an explicit stack (the CST can be arbitrarily deep, the library's composer recurses per level).
 */
import type { CST } from 'yaml';
import type { Cut, SourceComment } from './shared';

type AnyToken = CST.Token | CST.SourceToken;

function isCollectionToken(t: AnyToken): t is CST.BlockMap | CST.BlockSequence | CST.FlowCollection {
  return t.type === 'block-map' || t.type === 'block-seq' || t.type === 'flow-collection';
}

/** Pushes the child tokens of `t` (in reverse so that they pop in source order). */
function children(t: AnyToken): AnyToken[] {
  const out: AnyToken[] = [];
  switch (t.type) {
    case 'document':
      out.push(...t.start);
      if (t.value) out.push(t.value);
      if (t.end) out.push(...t.end);
      break;
    case 'doc-end':
      if (t.end) out.push(...t.end);
      break;
    case 'block-map':
    case 'block-seq':
    case 'flow-collection':
      if (t.type === 'flow-collection') out.push(t.start);
      for (const item of t.items as CST.CollectionItem[]) {
        out.push(...item.start);
        if (item.key) out.push(item.key);
        if (item.sep) out.push(...item.sep);
        if (item.value) out.push(item.value);
      }
      if (t.type === 'flow-collection') out.push(...t.end);
      break;
    case 'block-scalar':
      out.push(...(t.props as AnyToken[]));
      break;
    case 'alias':
    case 'scalar':
    case 'single-quoted-scalar':
    case 'double-quoted-scalar':
      if (t.end) out.push(...t.end);
      break;
    default:
      break;
  }
  return out;
}

export function scanCst(tokens: CST.Token[], maxNesting: number): { comments: SourceComment[]; cuts: Cut[] } {
  const comments: SourceComment[] = [];
  const cuts: Cut[] = [];
  const stack: { t: AnyToken; depth: number }[] = [];
  for (let i = tokens.length - 1; i >= 0; i--) stack.push({ t: tokens[i]!, depth: 0 });
  while (stack.length > 0) {
    const { t, depth } = stack.pop()!;
    if (t.type === 'comment') {
      collectComment(t, comments);
      continue;
    }
    let childDepth = depth;
    if (isCollectionToken(t)) {
      childDepth = depth + 1;
      if (childDepth > maxNesting) {
        const cut = extentOf(t, comments);
        if (cut) cuts.push(cut);
        continue;
      }
    }
    const kids = children(t);
    for (let i = kids.length - 1; i >= 0; i--) stack.push({ t: kids[i]!, depth: childDepth });
  }
  cuts.sort((a, b) => a.start - b.start);
  comments.sort((a, b) => a.start - b.start);
  return { comments, cuts };
}

function collectComment(t: CST.SourceToken, comments: SourceComment[]): void {
  comments.push({ start: t.offset, end: t.offset + t.source.length, text: t.source.replace(/^#/, '') });
}

/** Source extent of a subtree: first content token to the end of its last token. */
function extentOf(root: AnyToken, comments: SourceComment[]): Cut | null {
  let start = Infinity;
  let end = -Infinity;
  const stack: AnyToken[] = [root];
  while (stack.length > 0) {
    const t = stack.pop()!;
    if ('source' in t && typeof t.source === 'string') {
      if (t.type === 'comment') collectComment(t, comments);
      else if (t.type !== 'space' && t.type !== 'newline' && t.source.length > 0) {
        start = Math.min(start, t.offset);
        end = Math.max(end, t.offset + t.source.length);
      }
    }
    // A loop, not push(...): a flow list can have more children than a call has arguments.
    for (const kid of children(t)) stack.push(kid);
  }
  return Number.isFinite(start) && end > start ? { start, end } : null;
}

/**
 * The same string, flattened: V8 flattens a rope in place when it is searched. (A copy through
 * Buffer would also flatten it but would replace lone surrogates.)
 */
export function flatString(s: string): string {
  return s.indexOf('\u0000') === -2 ? '' : s;
}

// ---------------------------------------------------------------------------------------------
// Composed document -> located tree.
