/**
 * What must hold for any input text, however broken: analyzeText returns (never throws); every
 * span it reports lies inside the text and does not split a surrogate pair; every fix's edits
 * are in range and non-overlapping, and applying them keeps the BOM and CRLF endings and adds no
 * syntax errors. Shared by the vitest properties and `npm run fuzz`.
 */
import { analyzeText, readFile, type FileResult } from '../../server/src/engine/api';
import { FIX_EFFECTS, SEVERITIES, type TextEdit } from '../../server/src/base/findings';
import { applyEdits } from '../../server/src/fix/apply';
import { parseText } from '../../server/src/parse';
import type { SourceFormat, Span } from '../../server/src/parse/types';
import type { GeneratedConfig } from './configGen';

export class InvariantError extends Error {}

function fail(what: string, c: GeneratedConfig): never {
  const preview = JSON.stringify(c.text.length > 400 ? c.text.slice(0, 400) + '…' : c.text);
  throw new InvariantError(`${what}\n  format: ${c.format}, path: ${c.path}, length ${c.text.length}\n  text: ${preview}`);
}

const isHigh = (code: number) => code >= 0xd800 && code <= 0xdbff;
const isLow = (code: number) => code >= 0xdc00 && code <= 0xdfff;

/** True when `offset` falls between the two halves of a surrogate pair. */
function splitsSurrogate(text: string, offset: number): boolean {
  return offset > 0 && offset < text.length && isHigh(text.charCodeAt(offset - 1)) && isLow(text.charCodeAt(offset));
}

function checkSpan(span: Span | undefined, text: string, what: string, c: GeneratedConfig): void {
  if (!span || typeof span.start !== 'number' || typeof span.end !== 'number') fail(`${what}: missing span`, c);
  const { start, end } = span;
  if (!Number.isInteger(start) || !Number.isInteger(end)) fail(`${what}: non-integer span ${start}..${end}`, c);
  if (start < 0 || end < start || end > text.length) fail(`${what}: span ${start}..${end} outside 0..${text.length}`, c);
  if (splitsSurrogate(text, start) || splitsSurrogate(text, end)) fail(`${what}: span ${start}..${end} splits a surrogate pair`, c);
}

/** Applies edits after checking them; throws InvariantError on overlap or out-of-range spans. */
export function applyEditsChecked(text: string, edits: TextEdit[], what: string, c: GeneratedConfig): string {
  const sorted = [...edits].sort((a, b) => a.span.start - b.span.start || a.span.end - b.span.end);
  for (let i = 0; i < sorted.length; i++) {
    const e = sorted[i]!;
    checkSpan(e.span, text, `${what}, edit ${i}`, c);
    if (typeof e.newText !== 'string') fail(`${what}, edit ${i}: newText is not a string`, c);
    if (i > 0 && sorted[i - 1]!.span.end > e.span.start) {
      fail(`${what}: edits overlap (${sorted[i - 1]!.span.start}..${sorted[i - 1]!.span.end} and ${e.span.start}..${e.span.end})`, c);
    }
    for (const at of [e.span.start, e.span.end]) {
      if (at > 0 && at < text.length && text[at - 1] === '\r' && text[at] === '\n') fail(`${what}: edit boundary ${at} splits a CRLF`, c);
    }
  }
  let out = text;
  for (let i = sorted.length - 1; i >= 0; i--) {
    const e = sorted[i]!;
    out = out.slice(0, e.span.start) + e.newText + out.slice(e.span.end);
  }
  return out;
}

function errorCount(text: string, format: SourceFormat): number {
  return parseText(text, format).problems.filter((p) => p.severity === 'error').length;
}

const onlyCrlf = (t: string) => t.includes('\r\n') && !/(^|[^\r])\n/.test(t);

export interface CheckStats {
  findings: number;
  fixes: number;
  rules: Set<string>;
}

/** A paired training file: its documents are passed as partners (train-sample-mismatch). */
export interface Partner {
  config: GeneratedConfig;
  role: 'training' | 'sampling';
}

/** Runs the whole pipeline on one input and checks every invariant; returns what it saw. */
export function checkConfig(c: GeneratedConfig, stats?: CheckStats, partner?: Partner): FileResult {
  let result: FileResult;
  let options: Parameters<typeof analyzeText>[1] = { path: c.path, format: c.format };
  try {
    if (partner) {
      const p = partner.config;
      const read = readFile(p.text, { path: p.path, format: p.format });
      const partners = read.documents.filter((d) => d.setup.isDiffusionConfig).map((d) => ({ path: p.path, setup: d.setup, analysis: d.analysis }));
      options = { ...options, partners, pairRole: partner.role === 'training' ? 'sampling' : 'training' };
    }
    result = analyzeText(c.text, options);
  } catch (err) {
    fail(`analyzeText threw: ${err instanceof Error ? (err.stack ?? err.message) : String(err)}`, c);
  }
  if (!result || !Array.isArray(result.findings) || !result.parsed) fail('analyzeText returned no result', c);
  const { text } = c;
  for (const p of result.parsed.problems) checkSpan(p.span, text, `parse problem "${p.code}"`, c);
  const docCount = result.parsed.documents.length;
  let before: number | undefined;
  for (const [i, f] of result.findings.entries()) {
    const what = `finding ${i} (${f.rule})`;
    if (typeof f.rule !== 'string' || f.rule === '') fail(`${what}: no rule id`, c);
    if (typeof f.message !== 'string' || f.message.trim() === '') fail(`${what}: empty message`, c);
    if (!SEVERITIES.includes(f.severity)) fail(`${what}: severity ${String(f.severity)}`, c);
    if (!Number.isInteger(f.documentIndex) || f.documentIndex < 0 || (docCount > 0 && f.documentIndex >= docCount)) {
      fail(`${what}: documentIndex ${f.documentIndex} with ${docCount} documents`, c);
    }
    checkSpan(f.span, text, what, c);
    for (const [j, r] of (f.related ?? []).entries()) {
      if (r.path === undefined) checkSpan(r.span, text, `${what}, related ${j}`, c);
      else if (partner && r.path === partner.config.path) checkSpan(r.span, partner.config.text, `${what}, related ${j} in the partner`, c);
      else if (r.path !== c.path) fail(`${what}, related ${j}: unknown path ${r.path}`, c);
    }
    if (f.fixes.filter((x) => x.preferred).length > 1) fail(`${what}: more than one preferred fix`, c);
    stats?.rules.add(f.rule);
    for (const [k, fix] of f.fixes.entries()) {
      const fwhat = `${what}, fix ${k} "${fix.title}"`;
      if (!fix.title) fail(`${fwhat}: no title`, c);
      if (!FIX_EFFECTS.includes(fix.effect)) fail(`${fwhat}: effect ${String(fix.effect)}`, c);
      if (typeof fix.touchesComment !== 'boolean') fail(`${fwhat}: touchesComment ${String(fix.touchesComment)}`, c);
      if (fix.effect === 'needs-retraining' && !/fine-tuning or retraining/.test(fix.title))
        fail(`${fwhat}: needs retraining but the title does not say so`, c);
      const after = applyEditsChecked(text, fix.edits, fwhat, c);
      let viaFix: string;
      try {
        viaFix = applyEdits(text, fix.edits);
      } catch (err) {
        fail(`${fwhat}: fix/applyEdits refused the edits: ${err instanceof Error ? err.message : String(err)}`, c);
      }
      if (viaFix !== after) fail(`${fwhat}: fix/applyEdits and the reference application disagree`, c);
      if (text.startsWith('\ufeff') && !after.startsWith('\ufeff')) fail(`${fwhat}: lost the BOM`, c);
      if (onlyCrlf(text) && /(^|[^\r])\n/.test(after)) fail(`${fwhat}: wrote a bare LF into a CRLF file`, c);
      before ??= errorCount(text, c.format);
      const afterErrors = errorCount(after, c.format);
      if (afterErrors > before) {
        fail(`${fwhat}: the fixed text has ${afterErrors} parse errors, the original ${before}\n  fixed: ${JSON.stringify(after.slice(0, 400))}`, c);
      }
      try {
        analyzeText(after, options);
      } catch (err) {
        fail(`${fwhat}: analyzeText threw on the fixed text: ${err instanceof Error ? err.message : String(err)}`, c);
      }
      if (stats) stats.fixes++;
    }
  }
  if (stats) stats.findings += result.findings.length;
  return result;
}
