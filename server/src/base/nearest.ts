/** Near misses of a written name (a misspelled rule id, field, option or value), for "did you mean" hints: the one edit distance of the project. */

/** The candidate within edit distance 2 of `word` (case ignored), closest first; '' when none is. */
export function nearestName(word: string, candidates: readonly string[]): string {
  let best = '';
  let bestDistance = 3;
  for (const c of candidates) {
    const d = editDistance(word.toLowerCase(), c.toLowerCase(), 2);
    if (d < bestDistance) {
      best = c;
      bestDistance = d;
    }
  }
  return best;
}

/**
 * Optimal-string-alignment distance (Levenshtein plus adjacent transpositions, so "linaer" is one
 * edit from "linear"). Stops early and returns `max + 1` once the distance must exceed `max`.
 */
export function editDistance(a: string, b: string, max = Infinity): number {
  if (a === b) return 0;
  if (Math.abs(a.length - b.length) > max) return max + 1;
  if (a.length === 0) return b.length;
  if (b.length === 0) return a.length;
  let prev2: number[] = new Array(b.length + 1).fill(0);
  let prev: number[] = Array.from({ length: b.length + 1 }, (_, j) => j);
  let cur: number[] = new Array(b.length + 1).fill(0);
  for (let i = 1; i <= a.length; i++) {
    cur[0] = i;
    let rowMin = cur[0];
    for (let j = 1; j <= b.length; j++) {
      const cost = a[i - 1] === b[j - 1] ? 0 : 1;
      let d = Math.min(prev[j]! + 1, cur[j - 1]! + 1, prev[j - 1]! + cost);
      if (i > 1 && j > 1 && a[i - 1] === b[j - 2] && a[i - 2] === b[j - 1]) d = Math.min(d, prev2[j - 2]! + 1);
      cur[j] = d;
      if (d < rowMin) rowMin = d;
    }
    if (rowMin > max) return max + 1;
    [prev2, prev, cur] = [prev, cur, prev2];
  }
  return prev[b.length]!;
}
