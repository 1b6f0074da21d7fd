/**
 * Which fixes an automatic "fix everything" applies: one policy for the CLI fix loop and the
 * editor's fix-all. Per finding, the allowed fixes are tried preferred first; the first whose
 * edits are well formed and collide with nothing already taken wins; findings are visited in
 * position order. A fix that collides waits for the next round (the fix loop analyses again).
 */
import type { Finding, FixProposal, TextEdit } from '../base/findings';
import { anyConflict, editsConflict, sortEdits } from './apply';

/** The consents given for a run: sampling-only fixes that keep every comment need none. */
export interface FixConsent {
  /** Fixes that change what the model learns (the checkpoint needs fine-tuning or retraining). */
  acceptRetraining: boolean;
  /** Fixes that replace or delete part of a comment the user wrote. */
  acceptCommentEdits: boolean;
}

export const NO_CONSENT: FixConsent = { acceptRetraining: false, acceptCommentEdits: false };
export const FULL_CONSENT: FixConsent = { acceptRetraining: true, acceptCommentEdits: true };

/** Whether a fix may be applied under the given consents. */
export function allowedFix(consent: FixConsent): (fix: FixProposal) => boolean {
  return (fix) =>
    fix.edits.length > 0 && (fix.effect === 'sampling-only' || consent.acceptRetraining) && (!fix.touchesComment || consent.acceptCommentEdits);
}

/** The allowed fixes of a finding, preferred first. */
export function fixCandidates(fixes: readonly FixProposal[], allow: (fix: FixProposal) => boolean): FixProposal[] {
  return fixes.filter(allow).sort((a, b) => Number(b.preferred) - Number(a.preferred));
}

export interface SelectedFix {
  finding: Finding;
  fix: FixProposal;
}

export interface FixSelection {
  /** Sorted, non-overlapping edits of every selected fix. */
  edits: TextEdit[];
  selected: SelectedFix[];
}

function wellFormed(edits: readonly TextEdit[], textLength: number): boolean {
  if (edits.some((e) => e.span.start < 0 || e.span.end > textLength || e.span.end < e.span.start)) return false;
  const own = sortEdits([...edits]);
  return !own.some((e, i) => i > 0 && anyConflict([e], own.slice(0, i)));
}

/**
 * The edits taken so far, sorted by start then end. Edits that do not conflict, sorted so, also
 * have non-decreasing ends; so the edits a new one could collide with are found by a binary
 * search and a short scan, and selecting among n fixes costs n log n instead of n squared.
 */
class TakenEdits {
  readonly sorted: TextEdit[] = [];

  /** The first index whose edit ends at or after `offset`. */
  private firstEndingFrom(offset: number): number {
    let lo = 0;
    let hi = this.sorted.length;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (this.sorted[mid]!.span.end < offset) lo = mid + 1;
      else hi = mid;
    }
    return lo;
  }

  conflicts(edits: readonly TextEdit[]): boolean {
    for (const edit of edits) {
      for (let i = this.firstEndingFrom(edit.span.start); i < this.sorted.length; i++) {
        const other = this.sorted[i]!;
        if (other.span.start > edit.span.end) break;
        if (editsConflict(edit, other)) return true;
      }
    }
    return false;
  }

  add(edits: readonly TextEdit[]): void {
    for (const edit of edits) {
      // After every edit that sorts before it or the same (start, then end).
      let lo = 0;
      let hi = this.sorted.length;
      while (lo < hi) {
        const mid = (lo + hi) >> 1;
        const m = this.sorted[mid]!.span;
        if (m.start < edit.span.start || (m.start === edit.span.start && m.end <= edit.span.end)) lo = mid + 1;
        else hi = mid;
      }
      this.sorted.splice(lo, 0, edit);
    }
  }
}

/** At most one fix per finding, by the policy above. */
export function selectFixes(findings: readonly Finding[], textLength: number, allow: (fix: FixProposal) => boolean): FixSelection {
  const taken = new TakenEdits();
  const selected: SelectedFix[] = [];
  const ordered = [...findings].sort((a, b) => a.span.start - b.span.start);
  for (const finding of ordered) {
    for (const fix of fixCandidates(finding.fixes, allow)) {
      if (!wellFormed(fix.edits, textLength) || taken.conflicts(fix.edits)) continue;
      taken.add(fix.edits);
      selected.push({ finding, fix });
      break;
    }
  }
  return { edits: taken.sorted, selected };
}
