/**
 * The engine's caches, bounded (docs/design.md, "Parameters"): what a run derives from a set-point (a magnet's
 * sorting at an axis and field, a Hamiltonian at a field, a rotation to an axis, a velocity distribution) is kept
 * for the next run, which usually shares most of them (an edit, the next point of a scan). A scan, a budget or a
 * fit makes a new set-point at every evaluation, so every cache keyed by value holds at most `bound` entries and
 * drops the least recently used one beyond that. Every cache registers here, so one call lists their sizes and
 * counts (`cacheStats`) and one empties them all (`clearCaches`).
 */

export interface CacheStats {
  readonly name: string;
  readonly size: number;
  readonly bound: number;
  readonly hits: number;
  readonly misses: number;
  readonly evictions: number;
}

interface Registered {
  stats(): CacheStats;
  clear(): void;
}

const registry: Registered[] = [];

/** A map of at most `bound` entries; a hit makes its entry the most recent, an insertion beyond the bound drops the least recent. */
export class BoundedCache<K, V> implements Registered {
  private readonly map = new Map<K, V>();
  hits = 0;
  misses = 0;
  evictions = 0;

  constructor(readonly name: string, readonly bound: number) {
    registry.push(this);
  }

  get(key: K): V | undefined {
    const v = this.map.get(key);
    if (v === undefined) {
      this.misses++;
      return undefined;
    }
    this.hits++;
    // most recent last (a Map iterates in insertion order)
    this.map.delete(key);
    this.map.set(key, v);
    return v;
  }

  set(key: K, value: V): void {
    this.map.delete(key);
    this.map.set(key, value);
    while (this.map.size > this.bound) {
      this.map.delete(this.map.keys().next().value as K);
      this.evictions++;
    }
  }

  /** The cached value, or `make()` kept. */
  getOr(key: K, make: () => V): V {
    let v = this.get(key);
    if (v === undefined) this.set(key, (v = make()));
    return v;
  }

  get size(): number {
    return this.map.size;
  }

  clear(): void {
    this.map.clear();
    this.hits = this.misses = this.evictions = 0;
  }

  stats(): CacheStats {
    return { name: this.name, size: this.map.size, bound: this.bound, hits: this.hits, misses: this.misses, evictions: this.evictions };
  }
}

/**
 * Counters of a family of small caches kept with objects (a state's port selections, one map per state): each is
 * bounded by `bound` where it is kept (`put`); this records the family's totals for `cacheStats`. The objects
 * that hold them are themselves kept in caches, so `clearCaches` reaches them by clearing those.
 */
export class CacheFamily implements Registered {
  hits = 0;
  misses = 0;
  evictions = 0;

  constructor(readonly name: string, readonly bound: number) {
    registry.push(this);
  }

  /** Keep `value` in `map` (one member of the family), dropping its oldest entry beyond the bound. */
  put<K, V>(map: Map<K, V>, key: K, value: V): void {
    map.set(key, value);
    if (map.size > this.bound) {
      map.delete(map.keys().next().value as K);
      this.evictions++;
    }
  }

  clear(): void {
    this.hits = this.misses = this.evictions = 0;
  }

  stats(): CacheStats {
    return { name: this.name, size: -1, bound: this.bound, hits: this.hits, misses: this.misses, evictions: this.evictions };
  }
}

/**
 * A cache keyed by object identity (a WeakMap: its entries go with their keys), registered so that `clearCaches`
 * empties it too. `size` counts the entries made, not those still alive (a WeakMap cannot be counted).
 */
export class IdentityCache<K extends object, V> implements Registered {
  private map = new WeakMap<K, V>();
  hits = 0;
  misses = 0;
  private made = 0;

  constructor(readonly name: string) {
    registry.push(this);
  }

  get(key: K): V | undefined {
    const v = this.map.get(key);
    if (v === undefined) this.misses++;
    else this.hits++;
    return v;
  }

  set(key: K, value: V): void {
    this.made++;
    this.map.set(key, value);
  }

  getOr(key: K, make: () => V): V {
    let v = this.get(key);
    if (v === undefined) this.set(key, (v = make()));
    return v;
  }

  clear(): void {
    this.map = new WeakMap();
    this.hits = this.misses = this.made = 0;
  }

  stats(): CacheStats {
    return { name: this.name, size: this.made, bound: Infinity, hits: this.hits, misses: this.misses, evictions: 0 };
  }
}

/** Sizes and counts of every registered cache. */
export function cacheStats(): CacheStats[] {
  return registry.map((c) => c.stats());
}

/** Empty every registered cache and zero its counts (results are the same afterwards, computed again). */
export function clearCaches(): void {
  for (const c of registry) c.clear();
}
