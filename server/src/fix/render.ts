/**
 * Concept edits -> minimal text edits. The document is never re-serialised: a value is replaced in
 * place, an inserted key goes next to its siblings with their indentation and spacing, a removed
 * key takes its own line(s) with it. When an edit cannot be made without breaking the text or
 * losing a comment, the whole fix is given up (null).
 *
 * Syntax safety, without parsing the file once per fix:
 * - On a file that parsed cleanly, the shapes written here keep the syntax by construction: a
 *   scalar token (checked against the token grammar in tokens.ts) in place of a one-line scalar, a list
 *   of number tokens with the list's own separators, whole `key: value` lines at a sibling's
 *   indentation in a block map, whole block-map lines removed, JSON members added or removed
 *   with their commas (JSON's grammar has no context beyond the comma).
 * - Anything else is "risky" and the edited text is parsed again before the fix is offered (as
 *   every fix was once): a file with parse problems (its tree is partial; a dropped duplicate key
 *   still has its comma), YAML flow collections, a key that does not start its line or follows a
 *   dash with tabs, a removed line that defines an anchor (an alias elsewhere may need it), a
 *   value text outside the token grammar.
 * - Where a fix is applied, the result is checked in full again: the fix loop re-analyses every
 *   round and refuses a round that adds a parse error (fix/loop.ts), and LSP code actions parse
 *   the result of each fix they hand out (editsKeepSyntax, lsp/codeActions.ts). Printed fixes
 *   (`check --format json`, SARIF) rely on the construction above.
 */
import type { TextEdit } from '../base/findings';
import type { Concept, ConceptValues } from '../fields/concepts';
import { CONCEPT_GROUP } from '../fields/concepts';
import type { LocatedEntry, LocatedList, LocatedMap, LocatedNode, LocatedScalar, ParsedFile, SourceFormat } from '../parse/types';
import type { ConceptEdit } from '../rules/types';
import type { FieldSource, Setup } from '../setup/types';
import { editsConflict, sortEdits } from './apply';
import { withLoneCrAsLf } from '../parse/yaml';
import { rangeHasComment } from './comments';
import { formatBoolean, formatNumber, formatString, requote, type QuoteStyle } from './format';
import { KEY_ALIASES } from '../fields/aliases';
import { normalizeKeySegment } from '../fields/normalize';
import { INSERT_KEY, INTEGER_CONCEPTS, insertKeyFor, spellEnum, targetAsBoolean } from './spellings';
import { isBlank, keySpanWithQuotes, lineBreakOf, lineStartOf } from './text';
import { GiveUp, giveUp, isNumberList, isNumberToken, isScalarToken, walkMaps, walkScalars, TOML_BARE_KEY, TOML_KEY_PREFIX } from './tokens';
import { remove, type RemovalContext } from './removeEntry';
import { renderInsert, type InsertContext, type PendingInsert } from './insertEntry';
import { editsKeepSyntax, HARMLESS_PROBLEMS, VALIDATE_MAX_CHARS } from './syntaxCheck';

export { editsKeepSyntax } from './syntaxCheck';
export { isScalarToken } from './tokens';

const BOOLEAN_CONCEPTS: ReadonlySet<Concept> = new Set<Concept>(['zeroTerminalSnr', 'thresholding', 'latentSpace', 'karrasSigmas']);
const ENUM_CONCEPTS: ReadonlySet<Concept> = new Set<Concept>(['betaSchedule', 'predictionTarget', 'timestepSpacing', 'sampler']);

interface LineView {
  /** The text the line computations run on: a lone CR reads as LF (same length, same offsets). */
  text: string;
  /** Line break written inside rendered edits (before `crOut`). */
  eol: '\n' | '\r\n';
  crOut: boolean;
}

/** Per parsed file, computed once: scanning the whole text per fix made many-document files quadratic. */
const lineViews = new WeakMap<ParsedFile, LineView>();

function lineView(parsed: ParsedFile): LineView {
  let view = lineViews.get(parsed);
  if (!view) {
    const ending = parsed.lineEnding;
    view = { text: withLoneCrAsLf(parsed.text), eol: ending === '\r' ? '\n' : ending, crOut: ending === '\r' };
    lineViews.set(parsed, view);
  }
  return view;
}

class Renderer implements RemovalContext, InsertContext {
  readonly text: string;
  readonly format: SourceFormat;
  readonly eol: string;
  readonly edits: TextEdit[] = [];
  readonly removed = new Set<LocatedEntry>();
  /** Commas that removals in flow maps delete: an insert must not rely on them. */
  readonly removedCommas = new Set<number>();
  private readonly inserts: PendingInsert[] = [];
  /** Concepts whose new value is spelled plainly, not like the old text (loader-safe spelling). */
  private readonly plainSpelling = new Set<Concept>();
  private booleanSpelling: 'lower' | 'title' | 'upper' | undefined;
  private insertQuote: QuoteStyle | undefined;
  /** Why the edits need a parse of the result before they are offered (see the module comment). */
  riskyBecause: string | null = null;
  /** The file breaks its lines with lone CRs: new line breaks are written as CR too. */
  private readonly crOut: boolean;

  constructor(
    readonly parsed: ParsedFile,
    readonly setup: Setup,
  ) {
    const view = lineView(parsed);
    this.text = view.text;
    this.format = parsed.format;
    this.eol = view.eol;
    this.crOut = view.crOut;
  }

  /** Marks the rendered edits as outside the shapes that keep the syntax by construction. */
  risky(why: string): void {
    this.riskyBecause ??= why;
  }

  run(edits: readonly ConceptEdit[]): TextEdit[] {
    const seen = new Set<Concept>();
    for (const edit of edits) {
      if (seen.has(edit.concept)) giveUp(`two edits of ${edit.concept}`);
      seen.add(edit.concept);
      if (this.setup.problems.some((p) => p.concept === edit.concept && p.kind === 'duplicate')) giveUp('duplicate keys');
    }
    // Removals first, so that an insertion never anchors on an entry that goes away.
    for (const edit of edits) if (edit.kind === 'remove') remove(this, edit.concept, edit.keepComment === true);
    for (const edit of edits) if (edit.kind === 'set' && edit.plainSpelling) this.plainSpelling.add(edit.concept);
    for (const edit of edits) if (edit.kind === 'set') this.set(edit.concept, edit.value);
    for (const pending of this.inserts) renderInsert(this, pending);
    return this.finish();
  }

  // ---- lookup ------------------------------------------------------------------------------

  sourceOf(concept: Concept): FieldSource | null {
    const field = this.setup.fields[concept];
    if (field?.source) return field.source;
    return this.setup.problems.find((p) => p.concept === concept)?.source ?? null;
  }

  private documentRoot(): LocatedNode | null {
    return this.parsed.documents.find((d) => d.index === this.setup.documentIndex)?.root ?? this.setup.rootMap;
  }

  isFlow(map: LocatedMap): boolean {
    return this.format === 'json' || this.format === 'jsonc' || map.style === 'flow';
  }

  // ---- set ---------------------------------------------------------------------------------

  private set(concept: Concept, value: ConceptValues[Concept]): void {
    const source = this.sourceOf(concept);
    if (source) this.replace(concept, value, source);
    else {
      const empty = this.emptyEntryFor(concept);
      if (empty) this.replace(concept, value, empty);
      else this.queueInsert(concept, value);
    }
  }

  /**
   * `key:` with nothing after it is not a setting to the reader, but it is where the user meant the
   * value to go: an empty entry whose key is a spelling of the concept.
   */
  private emptyEntryFor(concept: Concept): { entry: LocatedEntry; key: string; parent: LocatedMap } | null {
    // TOML has no key without a value.
    if (this.format === 'toml') return null;
    const spellings = new Set<string>();
    for (const alias of KEY_ALIASES[concept] ?? []) {
      if (alias.kind === 'key' && !alias.spelling.includes('.')) spellings.add(normalizeKeySegment(alias.spelling));
    }
    for (const key of Object.values(INSERT_KEY[concept] ?? {})) spellings.add(normalizeKeySegment(key));
    const found: { entry: LocatedEntry; key: string; parent: LocatedMap }[] = [];
    walkMaps(this.documentRoot(), (map) => {
      for (const entry of map.entries) {
        if (entry.value === null && spellings.has(normalizeKeySegment(entry.key))) found.push({ entry, key: entry.key, parent: map });
      }
    });
    return found.length === 1 ? found[0]! : null;
  }

  private replace(concept: Concept, value: ConceptValues[Concept], source: Pick<FieldSource, 'entry' | 'key' | 'parent'>): void {
    const node = source.entry.value;
    const text = this.text;
    if (concept === 'betas') {
      if (!Array.isArray(value)) giveUp('betas needs a list');
      if (node?.kind === 'list') {
        this.replaceList(node, value);
        return;
      }
    }
    if (node && node.kind !== 'scalar') giveUp('value is a map or a list');
    const keySpan = keySpanWithQuotes(text, source.entry.keySpan);
    if (!node) {
      // `key:` with nothing after it: write the value after the colon.
      const colon = text.indexOf(':', keySpan.end);
      if (colon < 0 || !isBlank(text.slice(keySpan.end, colon))) giveUp('no colon after the key');
      const rest = text.slice(colon + 1, lineBreakOf(text, colon + 1));
      if (!/^[ \t]*(#.*)?$/.test(rest)) giveUp('unexpected text after the key');
      const valueText = this.valueText(concept, value, null, source.key);
      if (this.isFlow(source.parent)) this.risky('value written into an empty flow-map entry');
      if (!isScalarToken(valueText, this.format) && !isNumberList(valueText, this.format)) this.risky('value text outside the token grammar');
      this.edits.push({ span: { start: colon + 1, end: colon + 1 }, newText: ` ${valueText}` });
      return;
    }
    // The value must sit right after `key:` (no anchor, tag, or alias resolved from elsewhere).
    const between = text.slice(keySpan.end, node.span.start);
    const separator = this.format === 'yaml' ? /^[ \t]*:[ \t]*(\r?\n[ \t]*)?$/ : this.format === 'toml' ? /^[ \t]*=[ \t]*$/ : /^\s*:\s*$/;
    if (!separator.test(between)) giveUp('value is not written right after its key');
    if (node.kind === 'scalar') {
      if (node.style === 'block') giveUp('block scalar');
      const current = text.slice(node.span.start, node.span.end);
      if (/[\r\n]/.test(current)) giveUp('multi-line value');
      if (current.startsWith('*') || current.startsWith('&') || current.startsWith('!')) giveUp('alias, anchor or tag');
    }
    const valueText = this.valueText(concept, value, node, source.key);
    if (valueText === text.slice(node.span.start, node.span.end)) return;
    if (node.kind !== 'scalar' || !isScalarToken(valueText, this.format)) this.risky('value text outside the token grammar');
    this.edits.push({ span: { ...node.span }, newText: valueText });
  }

  /** The text of a value, spelled like the value it replaces (or like the file, for an insert). */
  private valueText(concept: Concept, value: ConceptValues[Concept], old: LocatedNode | null, key: string | null): string {
    const oldScalar: LocatedScalar | null = old?.kind === 'scalar' ? old : null;
    const oldQuote: QuoteStyle = oldScalar && (oldScalar.style === 'single' || oldScalar.style === 'double') ? oldScalar.style : 'plain';
    const keepQuotes = (s: string) => requote(s, oldQuote);
    if (concept === 'betas') {
      if (!Array.isArray(value) || value.length === 0) giveUp('betas needs a non-empty list');
      return `[${value.map((b) => this.number(concept, b, null)).join(', ')}]`;
    }
    // A key the consumer tests by truth value (consumer profile) is written as a boolean.
    const flag = key ? this.setup.consumer?.booleanKeys?.[key] : undefined;
    if (flag) {
      if (value !== flag.whenTrue && value !== flag.whenFalse) giveUp(`${key} cannot say ${String(value)}`);
      return formatBoolean(value === flag.whenTrue, this.format === 'yaml' ? this.booleanStyle(oldScalar) : 'lower');
    }
    if (concept === 'predictionTarget' && typeof oldScalar?.value === 'boolean') {
      // `v_parameterization: true` style.
      const b = targetAsBoolean(value as ConceptValues['predictionTarget']);
      if (b === null) giveUp('target cannot be written as a boolean');
      return keepQuotes(formatBoolean(b, this.format === 'yaml' ? this.booleanStyle(oldScalar) : 'lower'));
    }
    if (BOOLEAN_CONCEPTS.has(concept)) {
      if (typeof value !== 'boolean') giveUp(`${concept} needs a boolean`);
      return keepQuotes(formatBoolean(value, this.format === 'yaml' ? this.booleanStyle(oldScalar) : 'lower'));
    }
    if (ENUM_CONCEPTS.has(concept)) {
      if (typeof value !== 'string') giveUp(`${concept} needs a name`);
      const oldValue = typeof oldScalar?.value === 'string' ? oldScalar.value : null;
      // A consuming class with a profile spells the value its own way (consumer profile stage).
      const own = key ? this.setup.consumer?.enumSpellings?.[key]?.[value] : undefined;
      const spelled = own ?? spellEnum(concept, value, { key, oldValue, style: this.setup.keyStyle });
      if (spelled === null) giveUp(`no spelling for ${concept} ${value}`);
      const quote = oldScalar ? oldQuote : this.preferredQuote();
      return formatString(spelled, this.format, quote);
    }
    if (typeof value !== 'number') giveUp(`${concept} needs a number`);
    if (this.plainSpelling.has(concept)) return this.number(concept, value, null);
    return keepQuotes(this.number(concept, value, oldScalar?.raw ?? null));
  }

  private number(concept: Concept, n: number, oldRaw: string | null): string {
    const s = formatNumber(n, { format: this.format, oldRaw, integer: INTEGER_CONCEPTS.has(concept) });
    if (s === null) giveUp(`cannot write ${n}`);
    return s;
  }

  /** How the file spells booleans: the replaced value's casing, else the first boolean found. */
  private booleanStyle(old: LocatedScalar | null): 'lower' | 'title' | 'upper' {
    const casing = (raw: string) => (raw === raw.toUpperCase() ? 'upper' : raw[0] === raw[0]!.toUpperCase() ? 'title' : 'lower');
    if (old && typeof old.value === 'boolean' && old.style === 'plain') return casing(old.raw);
    if (this.booleanSpelling === undefined) {
      this.booleanSpelling = 'lower';
      walkScalars(this.documentRoot(), (s) => {
        if (typeof s.value === 'boolean' && s.style === 'plain' && /^[a-z]/i.test(s.raw)) {
          this.booleanSpelling = casing(s.raw);
          return true;
        }
        return false;
      });
    }
    return this.booleanSpelling;
  }

  /** The quoting most string values of the document use (for inserted enum values). */
  private preferredQuote(): QuoteStyle {
    if (this.insertQuote === undefined) {
      const counts = { plain: 0, single: 0, double: 0 };
      walkScalars(this.documentRoot(), (s) => {
        if (typeof s.value === 'string' && s.style !== 'block' && /^[A-Za-z_]/.test(s.value)) counts[s.style]++;
        return false;
      });
      this.insertQuote =
        counts.double > counts.plain && counts.double >= counts.single ? 'double' : counts.single > counts.plain ? 'single' : 'plain';
    }
    return this.insertQuote;
  }

  // ---- lists (explicit betas) ----------------------------------------------------------------

  private replaceList(list: LocatedList, values: number[]): void {
    const text = this.text;
    if (values.length === 0) giveUp('empty beta list');
    if (rangeHasComment(this.parsed, list.span.start, list.span.end)) giveUp('comments inside the list');
    const items = list.items;
    if (items.some((item) => item.kind !== 'scalar')) giveUp('list of non-scalars');
    const written = values.map((b, i) => this.number('betas', b, (items[Math.min(i, items.length - 1)] as LocatedScalar | undefined)?.raw ?? null));
    if (!written.every((n) => isNumberToken(n, this.format))) this.risky('beta text outside the number grammar');
    const isFlow = this.format !== 'yaml' || list.style === 'flow';
    if (isFlow) {
      const open = list.span.start;
      const close = list.span.end - 1;
      if (text[open] !== '[' || text[close] !== ']') giveUp('flow list without brackets');
      if (items.length === 0) {
        this.edits.push({ span: { ...list.span }, newText: `[${written.join(', ')}]` });
        return;
      }
      const prefix = text.slice(open + 1, items[0]!.span.start);
      const suffix = text.slice(items[items.length - 1]!.span.end, close);
      // Group the original items by line to keep the wrapping: items per line and the break.
      let line = 0;
      let perLine = 0;
      let onThisLine = 0;
      let inlineSep: string | null = null;
      let lineSep: string | null = null;
      for (let i = 0; i < items.length; i++) {
        if (i > 0) {
          const gap = text.slice(items[i - 1]!.span.end, items[i]!.span.start);
          if (gap.includes('\n')) {
            line++;
            lineSep ??= gap;
            onThisLine = 0;
          } else {
            inlineSep ??= gap;
          }
        }
        onThisLine++;
        perLine = Math.max(perLine, onThisLine);
      }
      inlineSep ??= ', ';
      if (!/^\s*,\s*$/.test(inlineSep) || (lineSep !== null && !/^[ \t]*,[ \t]*\r?\n[ \t]*$/.test(lineSep))) giveUp('unusual list separators');
      let body: string;
      if (line === 0 || lineSep === null) {
        body = written.join(inlineSep);
      } else {
        const rows: string[] = [];
        for (let i = 0; i < written.length; i += perLine) rows.push(written.slice(i, i + perLine).join(inlineSep));
        body = rows.join(lineSep);
      }
      this.edits.push({ span: { start: open + 1, end: close }, newText: prefix + body + suffix });
      return;
    }
    // Block list: `- value` lines with one indentation.
    let dashPrefix: string | null = null;
    for (const item of items) {
      const prefix = text.slice(lineStartOf(text, item.span.start), item.span.start);
      if (!/^[ \t]*-[ \t]+$/.test(prefix)) giveUp('block list item not on its own line');
      if (dashPrefix !== null && prefix !== dashPrefix) giveUp('uneven list indentation');
      dashPrefix = prefix;
      if (/[\r\n]/.test(text.slice(item.span.start, item.span.end))) giveUp('multi-line list item');
    }
    if (dashPrefix === null) giveUp('empty block list');
    const sep = items.length > 1 ? text.slice(items[0]!.span.end, items[1]!.span.start) : this.eol + dashPrefix;
    if (sep !== '\n' + dashPrefix && sep !== '\r\n' + dashPrefix) giveUp('blank lines inside the list');
    const first = items[0]!.span.start;
    const last = items[items.length - 1]!.span.end;
    this.edits.push({ span: { start: first, end: last }, newText: written.join(sep) });
  }

  // ---- insert ------------------------------------------------------------------------------

  private queueInsert(concept: Concept, value: ConceptValues[Concept]): void {
    const { map, anchor } = this.insertionPlace(concept);
    const keys = map.entries.map((e) => e.key);
    // A consuming class with a profile takes its own spellings only (consumer profile stage).
    const consumerKeys = this.setup.consumer?.insertKeys;
    const generic = !consumerKeys || (this.setup.consumer?.section !== undefined && !(concept in consumerKeys));
    const key = generic ? insertKeyFor(concept, this.setup.keyStyle, keys) : (consumerKeys[concept] ?? null);
    if (key === null) giveUp(`no key to write ${concept}`);
    const squash = (s: string) => s.toLowerCase().replace(/[_-]/g, '');
    if (keys.some((k) => squash(k) === squash(key))) giveUp(`the map already has a key like ${key}`);
    const valueText = this.valueText(concept, value, null, key);
    let pending = this.inserts.find((p) => p.map === map && p.anchor === anchor);
    if (!pending) {
      pending = { map, anchor, members: [] };
      this.inserts.push(pending);
    }
    if (pending.members.some((m) => m.key === key)) giveUp('two inserts of one key');
    if (!isScalarToken(valueText, this.format) && !isNumberList(valueText, this.format)) this.risky('value text outside the token grammar');
    pending.members.push({ concept, key, value: valueText });
  }

  /**
   * The map that holds the most concepts of the same group (else of any group, else the document
   * root), and the last such entry in it, which the new entry follows.
   */
  private insertionPlace(concept: Concept): { map: LocatedMap; anchor: LocatedEntry | null } {
    // A class nested in a larger config takes its own concepts in its own map, and nothing else
    // there (it is called with that map as keyword arguments).
    const section = this.setup.consumer?.section;
    const insertKeys = this.setup.consumer?.insertKeys;
    if (section && insertKeys && concept in insertKeys) {
      const live = section.entries.filter((e) => !this.removed.has(e));
      return { map: section, anchor: live.length > 0 ? live[live.length - 1]! : null };
    }
    const sources: FieldSource[] = [];
    const sameGroup: FieldSource[] = [];
    const group = CONCEPT_GROUP[concept];
    for (const [name, field] of Object.entries(this.setup.fields) as [Concept, { source: FieldSource | null } | undefined][]) {
      const source = field?.source;
      if (!source || this.removed.has(source.entry) || !source.parent.entries.includes(source.entry)) continue;
      if (section && source.parent === section) continue;
      sources.push(source);
      if (CONCEPT_GROUP[name] === group) sameGroup.push(source);
    }
    for (const candidates of [sameGroup, sources]) {
      if (candidates.length === 0) continue;
      const byMap = new Map<LocatedMap, LocatedEntry[]>();
      for (const s of candidates) {
        const list = byMap.get(s.parent) ?? [];
        list.push(s.entry);
        byMap.set(s.parent, list);
      }
      let best: { map: LocatedMap; entries: LocatedEntry[] } | null = null;
      for (const [map, entries] of byMap) {
        if (!best || entries.length > best.entries.length || (entries.length === best.entries.length && map.span.start < best.map.span.start)) {
          best = { map, entries };
        }
      }
      if (best) {
        const anchor = best.entries.reduce((a, b) => (b.span.start > a.span.start ? b : a));
        return { map: best.map, anchor };
      }
    }
    const root = this.setup.rootMap;
    if (!root) giveUp('the document has no map to insert into');
    const live = root.entries.filter((e) => !this.removed.has(e));
    return { map: root, anchor: live.length > 0 ? live[live.length - 1]! : null };
  }

  keyText(key: string, like: LocatedEntry | null): string {
    if (this.format === 'toml') return this.tomlDottedPrefix(like) + (TOML_BARE_KEY.test(key) ? key : JSON.stringify(key));
    if (this.format !== 'yaml') return JSON.stringify(key);
    if (like) {
      const q = this.text[keySpanWithQuotes(this.text, like.keySpan).start];
      if (q === '"') return JSON.stringify(key);
      if (q === "'") return `'${key}'`;
    }
    return key;
  }

  /**
   * The leading segments of a sibling's dotted key (`noise_scheduler.` for
   * `noise_scheduler.beta_schedule = ...`): a key written with them lands in the same table.
   */
  private tomlDottedPrefix(like: LocatedEntry | null): string {
    if (!like) return '';
    if (!like.tomlKey) giveUp('sibling is not written by a key/value line');
    const prefix = this.text.slice(like.tomlKey.start, keySpanWithQuotes(this.text, like.keySpan).start);
    if (!TOML_KEY_PREFIX.test(prefix)) giveUp('unusual dotted key');
    return prefix;
  }

  // ---- finish ------------------------------------------------------------------------------

  private finish(): TextEdit[] {
    const sorted = sortEdits(this.edits);
    const merged: TextEdit[] = [];
    for (const edit of sorted) {
      const last = merged[merged.length - 1];
      if (last && last.span.start === last.span.end && edit.span.start === edit.span.end && last.span.start === edit.span.start) {
        merged[merged.length - 1] = { span: last.span, newText: last.newText + edit.newText };
        continue;
      }
      if (last && editsConflict(last, edit)) giveUp('edits overlap');
      merged.push(edit);
    }
    for (let i = 0; i < merged.length; i++) {
      for (let j = i + 1; j < merged.length && merged[j]!.span.start < merged[i]!.span.end; j++) {
        if (editsConflict(merged[i]!, merged[j]!)) giveUp('edits overlap');
      }
    }
    if (this.crOut) for (const e of merged) e.newText = e.newText.replace(/\n/g, '\r');
    return merged;
  }
}

/**
 * Renders concept edits as minimal text edits, sorted by position and never overlapping.
 * Returns [] when the file already says what the edits ask, and null when the edits cannot be
 * written without breaking the text or losing a comment.
 */
export function renderConceptEdits(
  parsed: ParsedFile,
  setup: Setup,
  edits: ConceptEdit[],
  /** Told why no edit could be rendered: an expected give-up, or an unexpected failure. */
  onGiveUp?: (reason: string, unexpected: boolean) => void,
): TextEdit[] | null {
  try {
    const renderer = new Renderer(parsed, setup);
    const rendered = renderer.run(edits);
    const mustParse = renderer.riskyBecause !== null || !parsed.problems.every((p) => HARMLESS_PROBLEMS.has(p.code));
    if (rendered.length > 0 && mustParse && parsed.text.length <= VALIDATE_MAX_CHARS && !editsKeepSyntax(parsed, rendered)) return null;
    return rendered;
  } catch (err) {
    // Bad input never crashes the caller: either way the fix is not offered, and the caller learns why.
    const unexpected = !(err instanceof GiveUp);
    onGiveUp?.(err instanceof Error ? err.message : String(err), unexpected);
    return null;
  }
}

/** True when an edit replaces or deletes part of a comment (the engine then marks the fix `touchesComment`, so it is applied only on request). */
export function editsTouchComment(parsed: ParsedFile, edits: readonly TextEdit[]): boolean {
  return edits.some((e) => rangeHasComment(parsed, e.span.start, e.span.end));
}
