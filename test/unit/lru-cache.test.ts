/**
 * shared-math's LruCache keeps the most recently used entries (common practice for a bounded
 * memo): repeated hits of the newest key take a short cut, which must not change what is evicted.
 */
import { describe, expect, it } from 'vitest';
import { LruCache } from '@noiselint/shared-math';

describe('LruCache eviction order', () => {
  it('evicts the least recently used entry, with repeated hits of the newest key', () => {
    const c = new LruCache<string, number>(2, 100);
    c.set('a', 1);
    c.set('b', 2);
    expect(c.get('b')).toBe(2);
    expect(c.get('b')).toBe(2);
    expect(c.get('a')).toBe(1); // a is now the newest, b the oldest
    expect(c.get('a')).toBe(1);
    c.set('c', 3);
    expect(c.get('b')).toBeUndefined();
    expect(c.keys()).toEqual(['a', 'c']);
  });

  it('a deleted or replaced newest key is reordered again when it comes back', () => {
    const c = new LruCache<string, number>(2, 100);
    c.set('a', 1);
    c.set('b', 2);
    c.delete('b');
    c.set('b', 3);
    expect(c.get('a')).toBe(1);
    c.set('c', 4);
    expect(c.keys()).toEqual(['a', 'c']);
    c.clear();
    c.set('x', 1);
    c.set('y', 2);
    expect(c.get('x')).toBe(1);
    c.set('z', 3);
    expect(c.keys()).toEqual(['x', 'z']);
  });
});
