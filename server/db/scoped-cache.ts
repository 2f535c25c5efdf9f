/**
 * Caches that belong to one database: a process may serve several (tests
 * make an app per database), and ids from two databases must never meet in
 * one map. `connect` gives each database a scope and tags its transactions
 * with it; a handle with no scope gets no cache, so the caller just reads.
 */

/** A map that forgets its least recently used entry past `max` entries. */
export class Lru<K, V> {
  private readonly map = new Map<K, V>();
  constructor(private readonly max: number) {}

  get(key: K): V | undefined {
    const value = this.map.get(key);
    if (value !== undefined) {
      this.map.delete(key);
      this.map.set(key, value);
    }
    return value;
  }

  set(key: K, value: V): void {
    this.map.delete(key);
    if (this.map.size >= this.max) {
      const oldest = this.map.keys().next();
      if (!oldest.done) this.map.delete(oldest.value);
    }
    this.map.set(key, value);
  }

  delete(key: K): void {
    this.map.delete(key);
  }

  clear(): void {
    this.map.clear();
  }

  /** Forgets every entry `drop` says to, oldest first. */
  deleteWhere(drop: (value: V, key: K) => boolean): void {
    for (const [key, value] of this.map) if (drop(value, key)) this.map.delete(key);
  }

  get size(): number {
    return this.map.size;
  }
}

const scopes = new WeakMap<object, object>();

/** Marks a database handle (the database itself, or a transaction on it) as belonging to `scope`. */
export function tagScope(handle: object, scope: object): void {
  scopes.set(handle, scope);
}

export interface ScopedCache<K, V> {
  /** This handle's database's cache, or null when the handle belongs to no known database. */
  of(handle: object): Lru<K, V> | null;
}

export function scopedCache<K, V>(max: number): ScopedCache<K, V> {
  const caches = new WeakMap<object, Lru<K, V>>();
  return {
    of(handle) {
      const scope = scopes.get(handle);
      if (!scope) return null;
      let cache = caches.get(scope);
      if (!cache) {
        cache = new Lru<K, V>(max);
        caches.set(scope, cache);
      }
      return cache;
    },
  };
}
