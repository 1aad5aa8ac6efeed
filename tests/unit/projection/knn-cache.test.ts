/**
 * The rule of the neighbour-graph cache (lib/projections/knn-cache.ts) that decides which graph is
 * stored; the table itself is exercised by the projection and clustering jobs against PostgreSQL.
 */
import { describe, expect, it } from 'vitest';
import { APPROX_CACHE_K, EXACT_CACHE_K, cachedK } from '@/lib/projections/knn-cache';

describe('cachedK', () => {
  it('stores the exact graph at k = 50 while exact search is affordable, NN-descent at 15 beyond, never more than n − 1', () => {
    expect(cachedK(120, 8)).toBe(EXACT_CACHE_K);
    expect(cachedK(20_000, 32)).toBe(EXACT_CACHE_K);
    expect(cachedK(20_001, 32)).toBe(APPROX_CACHE_K);
    expect(cachedK(40, 8)).toBe(39);
  });
});
