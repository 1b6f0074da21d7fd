/**
 * Applying all fixes of one text: pick the fixes allowed by the safety level, apply their edits,
 * analyse again, repeat until nothing changes, so that fixing a fixed text changes nothing.
 * The analysis is passed in (the caller owns the pipeline); this module only does text.
 */
import type { Finding, FixProposal, FixSafety, TextEdit } from '../base/findings';
import type { ParseProblem } from '../parse/types';
import { anyConflict, applyEdits } from './apply';

export interface FixLoopOptions {
  /** Apply unsafe fixes too (they change what the model learns or touch a comment). */
  unsafe: boolean;
  /** Analyse-and-apply rounds before stopping. */
  maxPasses?: number;
}

export interface AppliedFix {
  rule: string;
  title: string;
  safety: FixSafety;
}

export interface FixLoopResult {
  /** The fixed text (the input when nothing applied or when it did not parse). */
  text: string;
  applied: AppliedFix[];
  /** The input has parse errors: nothing was applied. */
  parseError: ParseProblem | null;
  /** Findings of the first analysis (with a parse error: whether the engine saw a config). */
  initialFindings: readonly Finding[];
  /** A round produced text that no longer parsed; its edits were dropped and the loop stopped. */
  brokeText: boolean;
  /** Findings left with a fix at the allowed safety level (0 unless the loop ran out of rounds). */
  remaining: number;
  /** Findings left whose only fixes are unsafe (when unsafe fixes were not allowed). */
  unsafeOnly: number;
}

export const DEFAULT_MAX_PASSES = 5;

/** What the loop needs of an analysis: the parse (for its problems) and the findings. */
export interface LoopReading {
  parsed: { problems: readonly ParseProblem[] };
  findings: readonly Finding[];
}

type Analyze = (text: string) => LoopReading;

function firstParseError(result: Pick<LoopReading, 'parsed'>): ParseProblem | null {
  return result.parsed.problems.find((p) => p.severity === 'error') ?? null;
}

function allowed(fix: FixProposal, unsafe: boolean): boolean {
  return fix.edits.length > 0 && (unsafe || fix.safety === 'safe');
}

/** Fixes of a finding in the order to try them: the preferred one first. */
function candidates(fixes: readonly FixProposal[], unsafe: boolean): FixProposal[] {
  return fixes.filter((f) => allowed(f, unsafe)).sort((a, b) => Number(b.preferred) - Number(a.preferred));
}

export function fixText(text: string, analyze: Analyze, options: FixLoopOptions): FixLoopResult {
  const maxPasses = Math.max(1, options.maxPasses ?? DEFAULT_MAX_PASSES);
  let result = analyze(text);
  const parseError = firstParseError(result);
  const out: FixLoopResult = { text, applied: [], parseError, initialFindings: result.findings, brokeText: false, remaining: 0, unsafeOnly: 0 };
  if (parseError) return out;
  const seen = new Set<string>([text]);
  let current = text;
  for (let pass = 0; pass < maxPasses; pass++) {
    const chosen: TextEdit[] = [];
    const appliedNow: AppliedFix[] = [];
    for (const finding of result.findings) {
      for (const fix of candidates(finding.fixes, options.unsafe)) {
        // A fix whose edits collide with one already chosen waits for the next round.
        if (anyConflict(fix.edits, chosen)) continue;
        chosen.push(...fix.edits);
        appliedNow.push({ rule: finding.rule, title: fix.title, safety: fix.safety });
        break;
      }
    }
    if (chosen.length === 0) break;
    let next: string;
    try {
      next = applyEdits(current, chosen);
    } catch {
      break;
    }
    if (seen.has(next)) break; // no progress, or fixes undoing each other
    const nextResult = analyze(next);
    if (firstParseError(nextResult)) {
      out.brokeText = true;
      break;
    }
    seen.add(next);
    current = next;
    result = nextResult;
    out.applied.push(...appliedNow);
  }
  out.text = current;
  for (const finding of result.findings) {
    if (finding.fixes.some((f) => allowed(f, options.unsafe))) out.remaining++;
    else if (!options.unsafe && finding.fixes.some((f) => allowed(f, true))) out.unsafeOnly++;
  }
  return out;
}
