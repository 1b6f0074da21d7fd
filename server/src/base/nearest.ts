/** Near misses of a written name (a misspelled rule id, field or option), for "did you mean" hints. */

/** The candidate within edit distance 2 of `word` (case ignored), closest first; '' when none is. */
export function nearestName(word: string, candidates: readonly string[]): string {
  let best = '';
  let bestDistance = 3;
  for (const c of candidates) {
    const d = editDistance(word.toLowerCase(), c.toLowerCase());
    if (d < bestDistance) {
      best = c;
      bestDistance = d;
    }
  }
  return best;
}

/** Levenshtein distance, cut off at 3 (only near misses matter). */
export function editDistance(a: string, b: string): number {
  if (Math.abs(a.length - b.length) > 2) return 3;
  let prev = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i++) {
    const row = [i];
    for (let j = 1; j <= b.length; j++) {
      row[j] = Math.min(prev[j] + 1, row[j - 1] + 1, prev[j - 1] + (a[i - 1] === b[j - 1] ? 0 : 1));
    }
    prev = row;
  }
  return prev[b.length];
}
