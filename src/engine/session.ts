/**
 * The engine's session: its caches (src/physics/cache.ts), all bounded, with their statistics and one `clear`.
 * A long scan, budget or fit holds at most the caches' bounds, whatever the number of evaluations
 * (`npm run bench -- session` measures it).
 */
export { cacheStats as engineCacheStats, clearCaches as clearEngineCaches, type CacheStats } from '../physics/cache.ts';
