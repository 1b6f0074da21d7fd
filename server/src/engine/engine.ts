/**
 * The rule engine: runs every enabled rule over every diffusion document of a file and turns
 * their concept-level results into located findings with rendered fixes. Never throws: a rule
 * that fails yields no findings (and is reported through `onRuleError`), the run goes on.
 */
import { CONCEPT_GROUP, type Concept } from '../fields/concepts';
import { gateFixes } from '../consumers/gate';
import { editsTouchComment, rememberOrigin, renderConceptEdits } from '../fix';
import { syntaxBaseOf } from '../fix/syntaxCheck';
import { LineIndex } from '../parse/lineIndex';
import type { LocatedMap, LocatedNode, ParsedFile, Span } from '../parse/types';
import { ALL_RULE_METAS, PARSE_ERROR_ID, RULES, UNKNOWN_RULE_IN_COMMENT_ID } from '../rules';
import { nearestName } from '../base/nearest';
import type { ConceptFix, Rule, RuleContext, RuleFinding, RuleMeta } from '../rules/types';
import type { FieldSource, Setup } from '../setup/types';
import type { AnalyzeOptions, FileReading, ResolvedProject } from './types';
import { SEVERITIES, type Finding, type FixProposal, type RelatedLocation, type Severity } from '../base/findings';

export interface EngineHooks {
  /** Called when a rule (or a step of turning its result into a finding) throws. */
  onRuleError?: (ruleId: string, error: unknown) => void;
  /** Run only these ids (`parse-error` included when listed); every enabled rule when absent. */
  only?: readonly string[];
  /** Replaces the registry (tests). */
  rules?: readonly Rule[];
}

/**
 * Keys that mark a file with syntax errors as a diffusion config even when the (partial) tree is
 * not recognised as one. Cheap: one regular expression, no parsing.
 */
const CONFIG_KEY_HINT =
  /(?:^|[\s{,"'.[])(?:beta_schedule|num_train_timesteps|beta_start|beta_end|trained_betas|rescale_betas_zero_snr|zero_terminal_snr|prediction_type|timestep_spacing|steps_offset|num_inference_steps|noise_scheduler)["']?\s*[:=\]]/m;

export function runRules(file: FileReading, options: AnalyzeOptions, hooks: EngineHooks = {}): Finding[] {
  const report = (id: string, error: unknown) => {
    try {
      hooks.onRuleError?.(id, error);
    } catch {
      // A failing logger must not stop the run either.
    }
  };
  const findings: Finding[] = [];
  // Built only when a finding has no field to point at, or the file has suppression comments.
  let lineIndex: LineIndex | null = null;
  const lines = (): LineIndex => (lineIndex ??= new LineIndex(file.parsed.text));
  try {
    const project = options.project;
    const enabled = (id: string) => (!hooks.only || hooks.only.includes(id)) && project?.rules?.[id]?.severity !== 'off';

    if (enabled(PARSE_ERROR_ID)) {
      try {
        findings.push(...parseFindings(file, project));
      } catch (error) {
        report(PARSE_ERROR_ID, error);
      }
    }

    if (enabled(UNKNOWN_RULE_IN_COMMENT_ID)) {
      try {
        findings.push(...unknownIdFindings(file, project));
      } catch (error) {
        report(UNKNOWN_RULE_IN_COMMENT_ID, error);
      }
    }

    const rules = hooks.rules ?? RULES;
    const partners = options.partners ?? [];
    for (const doc of file.documents) {
      if (!doc.setup.isDiffusionConfig) continue;
      for (const rule of rules) {
        const id = rule.meta.id;
        if (!enabled(id)) continue;
        const ctx: RuleContext = {
          setup: doc.setup,
          analysis: doc.analysis,
          options: optionsFor(rule.meta, project),
          partners,
          pairRole: options.pairRole,
        };
        let results: RuleFinding[];
        try {
          results = rule.check(ctx);
        } catch (error) {
          report(id, error);
          continue;
        }
        if (!Array.isArray(results)) {
          report(id, new Error(`check returned ${results === null ? 'null' : typeof results}, not a list of findings`));
          continue;
        }
        for (const result of results) {
          try {
            findings.push(toFinding(rule.meta, result, doc.setup, file.parsed, project, lines, (error) => report(id, error)));
          } catch (error) {
            report(id, error);
          }
        }
      }
    }
  } catch (error) {
    report('engine', error);
  }
  try {
    return finish(findings, file.parsed, lines);
  } catch (error) {
    report('engine', error);
    return findings;
  }
}

type RuleOptions = Readonly<Record<string, number | string | boolean>>;
/** ruleOptions per project (a resolved project is never changed once made) and rule. */
const OPTIONS_MEMO = new WeakMap<object, WeakMap<RuleMeta, RuleOptions>>();
const NO_PROJECT = {};

/** ruleOptions, memoised and frozen: every document of a run shares one object per rule. */
function optionsFor(meta: RuleMeta, project: ResolvedProject | undefined): RuleOptions {
  const key = project ?? NO_PROJECT;
  let byRule = OPTIONS_MEMO.get(key);
  if (!byRule) {
    byRule = new WeakMap();
    OPTIONS_MEMO.set(key, byRule);
  }
  let options = byRule.get(meta);
  if (!options) {
    options = Object.freeze(ruleOptions(meta, project));
    byRule.set(meta, options);
  }
  return options;
}

/** Rule options: the rule's defaults, overridden by project settings of the same type. */
export function ruleOptions(meta: RuleMeta, project: ResolvedProject | undefined): Record<string, number | string | boolean> {
  const out: Record<string, number | string | boolean> = {};
  for (const [name, option] of Object.entries(meta.options)) out[name] = option.default;
  const overrides = project?.rules?.[meta.id]?.options;
  if (overrides) {
    for (const [name, value] of Object.entries(overrides)) {
      const option = Object.hasOwn(meta.options, name) ? meta.options[name] : undefined;
      if (!option || typeof value !== typeof option.default) continue;
      if (typeof value === 'number' && !Number.isFinite(value)) continue;
      out[name] = value;
    }
  }
  return out;
}

function configuredSeverity(id: string, project: ResolvedProject | undefined): Severity | undefined {
  const s = project?.rules?.[id]?.severity;
  return s && s !== 'off' && SEVERITIES.includes(s) ? s : undefined;
}

function toFinding(
  meta: RuleMeta,
  result: RuleFinding,
  setup: Setup,
  parsed: ParsedFile,
  project: ResolvedProject | undefined,
  lines: () => LineIndex,
  onFixFailure: (error: unknown) => void,
): Finding {
  const severity = configuredSeverity(meta.id, project) ?? validSeverity(result.severity) ?? meta.defaultSeverity;
  const gated = gateFixes(setup, result.fixes ?? []);
  // A text that does not parse gets no fixes: `fix` refuses it, so check must not offer them, and
  // edits placed on a partial tree could land in the wrong spot.
  const parses = !parsed.problems.some((p) => p.severity === 'error');
  const fixes = parses ? renderFixes(gated.fixes, parsed, setup, onFixFailure) : [];
  // Only when nothing else is offered: the consumer cannot express the change, so say what to change.
  const hints = fixes.length === 0 && gated.hints.length > 0 ? `; no fix offered: ${gated.hints.join('; ')}` : '';
  return {
    rule: meta.id,
    severity,
    message: String(result.message) + hints,
    span: locate(result, setup, parsed, lines),
    documentIndex: setup.documentIndex,
    related: relatedLocations(result, setup),
    fixes,
  };
}

function validSeverity(s: unknown): Severity | undefined {
  return typeof s === 'string' && (SEVERITIES as readonly string[]).includes(s) ? (s as Severity) : undefined;
}

// ---- location ------------------------------------------------------------------------------

/** The span a finding about a field covers: `key: value` for a scalar, the key for a map or list. */
export function fieldSpan(source: FieldSource): Span {
  const value = source.entry.value;
  if (!value || value.kind === 'scalar') return { ...source.entry.span };
  return { ...source.keySpan };
}

function locate(result: RuleFinding, setup: Setup, parsed: ParsedFile, lines: () => LineIndex): Span {
  if (result.source) return fieldSpan(result.source);
  if (result.at) {
    const field = setup.fields[result.at];
    if (field?.source) return fieldSpan(field.source);
    const problem = setup.problems.find((p) => p.concept === result.at);
    if (problem) return fieldSpan(problem.source);
    // `key:` or `key: null` names the concept without setting it: the finding belongs there.
    const nullKey = setup.nullKeys?.[result.at];
    if (nullKey) return fieldSpan(nullKey);
    const section = enclosingKey(setup, result.at);
    if (section) return section;
  }
  return firstLine(setup.documentSpan, parsed.text, lines());
}

/**
 * The key of the section that holds the concept's group siblings (e.g. `noise_scheduler` for a
 * missing schedule field), or null when they sit at the document root.
 */
function enclosingKey(setup: Setup, concept: Concept): Span | null {
  const group = CONCEPT_GROUP[concept];
  const counts = new Map<LocatedMap, number>();
  for (const field of Object.values(setup.fields)) {
    const source = field?.source;
    if (!source || CONCEPT_GROUP[field.concept] !== group) continue;
    counts.set(source.parent, (counts.get(source.parent) ?? 0) + 1);
  }
  let best: LocatedMap | null = null;
  for (const [map, n] of counts) {
    const bestN = best ? (counts.get(best) ?? 0) : -1;
    if (n > bestN || (n === bestN && best && map.span.start < best.span.start)) best = map;
  }
  if (!best || best === setup.rootMap || !setup.rootMap) return null;
  const entry = entryHolding(setup.rootMap, best);
  return entry ? { ...entry.keySpan } : null;
}

/** The innermost entry on the path from `root` to `target` (iterative, bounded by the tree). */
function entryHolding(root: LocatedNode, target: LocatedMap): { keySpan: Span } | null {
  const stack: { node: LocatedNode; entry: { keySpan: Span } | null }[] = [{ node: root, entry: null }];
  while (stack.length > 0) {
    const { node, entry } = stack.pop()!;
    if (node === target) return entry;
    // Only descend into nodes that contain the target.
    if (node.span.start > target.span.start || node.span.end < target.span.end) continue;
    if (node.kind === 'map') {
      for (const e of node.entries) if (e.value) stack.push({ node: e.value, entry: e });
    } else if (node.kind === 'list') {
      for (const item of node.items) stack.push({ node: item, entry });
    }
  }
  return null;
}

/** The first line of the document with content (not blank, a comment or a marker). */
function firstLine(documentSpan: Span, text: string, lines: LineIndex): Span {
  const start = Math.max(0, Math.min(documentSpan.start, text.length));
  const end = Math.max(start, Math.min(documentSpan.end, text.length));
  const firstLineNo = lines.lineAt(start);
  const lastLineNo = lines.lineAt(end);
  let fallback: Span | null = null;
  for (let line = firstLineNo; line <= lastLineNo && line < firstLineNo + 10_000; line++) {
    const a = Math.max(start, lines.lineStart(line));
    const b = Math.min(end, lines.lineEnd(line));
    const content = text.slice(a, b).replace(/^\uFEFF/, '');
    fallback ??= { start: a, end: b };
    const trimmed = content.trim();
    if (trimmed === '' || trimmed.startsWith('#') || trimmed.startsWith('//') || trimmed === '---' || trimmed.startsWith('%')) continue;
    const lead = content.length - content.trimStart().length + (text.slice(a, b).length - content.length);
    return { start: a + lead, end: b - (content.length - content.trimEnd().length) };
  }
  return fallback ?? { start, end: start };
}

// ---- related and fixes ---------------------------------------------------------------------

function relatedLocations(result: RuleFinding, setup: Setup): RelatedLocation[] {
  const out: RelatedLocation[] = [];
  for (const r of result.related ?? []) {
    const source = r.source ?? (r.concept ? setup.fields[r.concept]?.source : null) ?? null;
    if (!source) continue;
    const location: RelatedLocation = { span: fieldSpan(source), message: String(r.message) };
    if (r.path) location.path = r.path;
    out.push(location);
  }
  return out;
}

function renderFixes(fixes: ConceptFix[], parsed: ParsedFile, setup: Setup, onFailure: (error: unknown) => void): FixProposal[] {
  const rendered: (FixProposal & { wanted: boolean })[] = [];
  for (const fix of fixes) {
    if (!fix || !Array.isArray(fix.edits) || fix.edits.length === 0) continue;
    let edits;
    try {
      // A give-up (the text cannot say it without losing a comment or the syntax) is expected;
      // anything else is a bug worth reporting.
      edits = renderConceptEdits(parsed, setup, fix.edits, (reason, unexpected) => {
        if (unexpected) onFailure(new Error(`fix rendering failed: ${reason}`));
      });
    } catch (error) {
      onFailure(error);
      edits = null;
    }
    if (!edits || edits.length === 0) continue;
    let title = fix.title.replace('{newText}', edits.length === 1 ? quoted(edits[0]!.newText) : 'the suggested value');
    // An edit that would drop a comment the user wrote needs their consent, whatever its effect.
    const touchesComment = editsTouchComment(parsed, edits);
    if (touchesComment) title += ' (also removes a comment)';
    // Anything a rule did not mark as sampling-only is treated as the stronger claim.
    const effect = fix.effect === 'sampling-only' ? 'sampling-only' : 'needs-retraining';
    rendered.push({ title, effect, touchesComment, preferred: false, edits, wanted: fix.preferred === true });
  }
  const preferredIndex = Math.max(
    0,
    rendered.findIndex((f) => f.wanted),
  );
  // One tree-free record of the parse for all of them.
  const origin = rendered.length > 0 ? syntaxBaseOf(parsed) : null;
  return rendered.map((f, i) => {
    const proposal: FixProposal = {
      title: f.title,
      effect: f.effect,
      touchesComment: f.touchesComment,
      preferred: i === preferredIndex,
      edits: f.edits,
    };
    // Where the fix is handed out (LSP code actions), its result is parsed in full from here.
    rememberOrigin(proposal, origin!);
    return proposal;
  });
}

/** `"value"` for a written value, whatever quotes the file uses. */
function quoted(newText: string): string {
  const t = newText.trim();
  const bare = /^(["']).*\1$/s.test(t) ? t.slice(1, -1) : t;
  return `"${bare}"`;
}

// ---- parse problems ------------------------------------------------------------------------

function parseFindings(file: FileReading, project: ResolvedProject | undefined): Finding[] {
  const problems = file.parsed.problems;
  if (problems.length === 0) return [];
  const hasError = problems.some((p) => p.severity === 'error');
  const looksLikeConfig = file.isDiffusionConfig || (hasError && CONFIG_KEY_HINT.test(file.parsed.text));
  if (!looksLikeConfig) return [];
  const configured = configuredSeverity(PARSE_ERROR_ID, project);
  return problems.map((p) => {
    const doc = file.parsed.documents.find((d) => d.span.start <= p.span.start && p.span.start <= d.span.end);
    return {
      rule: PARSE_ERROR_ID,
      severity: configured ?? (p.severity === 'warning' ? 'warning' : 'error'),
      message: p.message,
      span: { ...p.span },
      documentIndex: doc?.index ?? 0,
      related: [],
      fixes: [],
    };
  });
}

// ---- deliberate-comments naming no rule --------------------------------------------------------

const KNOWN_IDS = ALL_RULE_METAS.map((m) => m.id);

/** A misspelled id keeps nothing quiet; say so where it is written (diffusion configs only). */
function unknownIdFindings(file: FileReading, project: ResolvedProject | undefined): Finding[] {
  const suppressions = file.parsed.suppressions ?? [];
  if (suppressions.length === 0 || !file.documents.some((d) => d.setup.isDiffusionConfig)) return [];
  const severity = configuredSeverity(UNKNOWN_RULE_IN_COMMENT_ID, project) ?? 'warning';
  const out: Finding[] = [];
  for (const s of suppressions) {
    for (const { id, span } of s.ids ?? []) {
      if (KNOWN_IDS.includes(id)) continue;
      const near = nearestName(id, KNOWN_IDS);
      const hint = near ? ` (did you mean "${near}"?)` : '; `noiselint rules` lists the rule ids';
      const doc = file.parsed.documents.find((d) => d.span.start <= span.start && span.start <= d.span.end);
      out.push({
        rule: UNKNOWN_RULE_IN_COMMENT_ID,
        severity,
        message: `"${id}" in this noiselint comment names no rule, so it keeps nothing quiet${hint}`,
        span: { ...span },
        documentIndex: doc?.index ?? 0,
        related: [],
        fixes: [],
      });
    }
  }
  return out;
}

// ---- suppressions, order -------------------------------------------------------------------

const SEVERITY_RANK: Record<Severity, number> = { error: 0, warning: 1, info: 2, hint: 3 };

function finish(findings: Finding[], parsed: ParsedFile, lines: () => LineIndex): Finding[] {
  const suppressions = parsed.suppressions ?? [];
  const suppressed = (f: Finding) => {
    if (suppressions.length === 0) return false;
    const line = lines().lineAt(f.span.start);
    return suppressions.some((s) => (s.rules.includes('*') || s.rules.includes(f.rule)) && (s.scope === 'file' || s.targetLine === line));
  };
  const seen = new Set<string>();
  const kept: Finding[] = [];
  for (const f of findings) {
    if (suppressed(f)) continue;
    const key = `${f.rule}|${f.documentIndex}|${f.span.start}|${f.span.end}|${f.message}`;
    if (seen.has(key)) continue;
    seen.add(key);
    kept.push(f);
  }
  return kept.sort(
    (a, b) =>
      a.span.start - b.span.start ||
      a.span.end - b.span.end ||
      SEVERITY_RANK[a.severity] - SEVERITY_RANK[b.severity] ||
      a.rule.localeCompare(b.rule) ||
      a.message.localeCompare(b.message),
  );
}
