/** The engine's bounded caches (src/physics/cache.ts). */
import { describe, expect, it } from 'vitest';
import { BoundedCache, CacheFamily, cacheStats, clearCaches } from '../../src/physics/cache.ts';

describe('BoundedCache', () => {
  it('holds at most its bound and drops the least recently used entry first', () => {
    const c = new BoundedCache<string, number>('test: bounded', 3);
    c.set('a', 1);
    c.set('b', 2);
    c.set('c', 3);
    expect(c.get('a')).toBe(1); // a is now the most recent
    c.set('d', 4);
    expect(c.size).toBe(3);
    expect(c.get('b')).toBeUndefined();
    expect([c.get('a'), c.get('c'), c.get('d')]).toEqual([1, 3, 4]);
    expect(c.stats()).toMatchObject({ name: 'test: bounded', size: 3, bound: 3, evictions: 1, hits: 4, misses: 1 });
  });

  it('makes a missing value once with getOr', () => {
    const c = new BoundedCache<number, string>('test: getOr', 2);
    let made = 0;
    const make = () => `v${++made}`;
    expect(c.getOr(1, make)).toBe('v1');
    expect(c.getOr(1, make)).toBe('v1');
    expect(made).toBe(1);
  });

  it('is listed by cacheStats and emptied by clearCaches', () => {
    const c = new BoundedCache<number, number>('test: registry', 10);
    c.set(1, 1);
    expect(cacheStats().some((s) => s.name === 'test: registry' && s.size === 1)).toBe(true);
    clearCaches();
    expect(c.size).toBe(0);
  });
});

describe('CacheFamily', () => {
  it('bounds each member map where it is kept', () => {
    const f = new CacheFamily('test: family', 2);
    const m = new Map<number, number>();
    for (let i = 0; i < 5; i++) f.put(m, i, i);
    expect([...m.keys()]).toEqual([3, 4]);
    expect(f.stats().evictions).toBe(3);
  });
});
