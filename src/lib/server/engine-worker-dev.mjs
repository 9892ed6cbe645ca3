// Development and tests only: worker threads do not inherit tsx's loader, so register it here and run the
// TypeScript source. A build uses build/engine-worker.js, bundled from the same source (vite.config.ts).
import { register } from 'tsx/esm/api';

register();
const tasks = await import('./engine-worker.ts');
export const { audit, preview, sweep, stallForce, trees, rehash, cacheKey } = tasks;
