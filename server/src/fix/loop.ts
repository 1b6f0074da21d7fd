/**
 * Applying all fixes of one text: pick the fixes whose consequences the caller accepted, apply their edits,
 * analyse again, repeat until nothing changes, so that fixing a fixed text changes nothing.
 * The analysis is passed in (the caller owns the pipeline); this module only does text.
 */
import type { Finding, FixEffect } from '../base/findings';
import type { ParseProblem } from '../parse/types';
import { applyEdits } from './apply';
import { composeChanges, type TextChange } from './changes';
import { allowedFix, FULL_CONSENT, selectFixes } from './select';

export interface FixLoopOptions {
  /** Also apply fixes that change what the model learns (the checkpoint needs fine-tuning or retraining). */
  acceptRetraining: boolean;
  /** Also apply fixes that replace or delete part of a comment the user wrote. */
  acceptCommentEdits: boolean;
  /** Analyse-and-apply rounds before stopping. */
  maxPasses?: number;
}

export interface AppliedFix {
  rule: string;
  title: string;
  effect: FixEffect;
  touchesComment: boolean;
}

export interface FixLoopResult {
  /** The fixed text (the input when nothing applied or when it did not parse). */
  text: string;
  /** Where `text` differs from the input, sorted (empty when nothing applied). */
  changes: TextChange[];
  applied: AppliedFix[];
  /** The input has parse errors: nothing was applied. */
  parseError: ParseProblem | null;
  /** Findings of the first analysis (with a parse error: whether the engine saw a config). */
  initialFindings: readonly Finding[];
  /** A round produced text that no longer parsed; its edits were dropped and the loop stopped. */
  brokeText: boolean;
  /** Findings left with an accepted fix (0 unless the loop ran out of rounds). */
  remaining: number;
  /** Findings left whose fixes all change what the model learns, when that was not accepted. */
  heldForRetraining: number;
  /** Findings left that accepting comment edits would let through. */
  heldForComments: number;
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

/**
 * What the loop keeps of an analysis: its first parse error and its findings. The analysis itself
 * (with the text's tree) is not held by the loop, so it can go before the next text is analysed.
 */
function kept(result: LoopReading): { parseError: ParseProblem | null; findings: readonly Finding[] } {
  return { parseError: firstParseError(result), findings: result.findings };
}

export function fixText(text: string, analyze: Analyze, options: FixLoopOptions): FixLoopResult {
  const maxPasses = Math.max(1, options.maxPasses ?? DEFAULT_MAX_PASSES);
  const allow = allowedFix(options);
  const first = kept(analyze(text));
  const parseError = first.parseError;
  const out: FixLoopResult = {
    text,
    changes: [],
    applied: [],
    parseError,
    initialFindings: first.findings,
    brokeText: false,
    remaining: 0,
    heldForRetraining: 0,
    heldForComments: 0,
  };
  if (parseError) return out;
  let findings = first.findings;
  const seen = new Set<string>([text]);
  let current = text;
  for (let pass = 0; pass < maxPasses; pass++) {
    // A fix whose edits collide with one already chosen waits for the next round.
    const { edits: chosen, selected } = selectFixes(findings, current.length, allow);
    const appliedNow: AppliedFix[] = selected.map(({ finding, fix }) => ({
      rule: finding.rule,
      title: fix.title,
      effect: fix.effect,
      touchesComment: fix.touchesComment,
    }));
    if (chosen.length === 0) break;
    let next: string;
    try {
      next = applyEdits(current, chosen);
    } catch {
      break;
    }
    if (seen.has(next)) break; // no progress, or fixes undoing each other
    const nextResult = kept(analyze(next));
    if (nextResult.parseError) {
      out.brokeText = true;
      break;
    }
    seen.add(next);
    out.changes = composeChanges(out.changes, chosen);
    current = next;
    findings = nextResult.findings;
    out.applied.push(...appliedNow);
  }
  out.text = current;
  for (const finding of findings) {
    if (finding.fixes.some(allow)) out.remaining++;
    else if (!finding.fixes.some(allowedFix(FULL_CONSENT))) continue;
    // Held back: name the consent that is missing (comment edits when they alone would let a fix through).
    else if (finding.fixes.some(allowedFix({ ...options, acceptCommentEdits: true }))) out.heldForComments++;
    else out.heldForRetraining++;
  }
  return out;
}
