/**
 * Caches kept per database: two databases never share an entry, a
 * transaction uses its database's cache, and the map forgets the least
 * recently used entry first.
 */
import { describe, expect, it } from 'vitest';
import { connect } from '../../server/db/client.ts';
import { Lru, scopedCache } from '../../server/db/scoped-cache.ts';
import { createTestDatabase } from './support.ts';

describe('Lru', () => {
  it('forgets the least recently used entry past its size', () => {
    const lru = new Lru<string, number>(2);
    lru.set('a', 1);
    lru.set('b', 2);
    expect(lru.get('a')).toBe(1); // a is now the most recent
    lru.set('c', 3);
    expect(lru.get('b')).toBeUndefined();
    expect(lru.get('a')).toBe(1);
    expect(lru.get('c')).toBe(3);
    expect(lru.size).toBe(2);
    lru.delete('a');
    expect(lru.get('a')).toBeUndefined();
  });
});

describe('scopedCache', () => {
  it('keeps one cache per database, shared by its transactions, and none for an unknown handle', async () => {
    const first = connect(await createTestDatabase(), 2);
    const second = connect(await createTestDatabase(), 2);
    try {
      const cache = scopedCache<number, string>(10);
      const a = cache.of(first.db)!;
      const b = cache.of(second.db)!;
      expect(a).not.toBeNull();
      expect(b).not.toBeNull();
      expect(a).not.toBe(b);
      a.set(1, 'first database');
      expect(b.get(1)).toBeUndefined();
      await first.db.transaction(async (tx) => {
        expect(cache.of(tx)).toBe(a);
        expect(cache.of(tx)!.get(1)).toBe('first database');
      });
      await second.db.transaction(async (tx) => {
        expect(cache.of(tx)).toBe(b);
      });
      expect(cache.of({})).toBeNull();
    } finally {
      await first.close();
      await second.close();
    }
  });
});
