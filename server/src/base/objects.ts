/**
 * `{ ...base, ...extra }` without the spread syntax. On Node 20 an object literal that adds
 * properties after a spread (and a spread copy that gets new properties later) takes a slow path
 * of about 1-5 µs per object, against about 0.1 µs for `Object.assign` (bench/NOTES.md); on the
 * paths that run per file or per finding that is a large share of the check. Same result for
 * plain data objects: own enumerable properties, `extra` winning.
 */
export function withProps<A extends object, B extends object>(base: A, extra: B): Omit<A, keyof B> & B {
  return Object.assign({}, base, extra);
}

/** A copy of `base` that may get new properties later (see withProps). */
export function copyOf<A extends object>(base: A): A {
  return Object.assign({}, base);
}
