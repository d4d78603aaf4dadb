// Seeded, deterministic noise for the tests: one generator for the whole project (database/seeded-random.ts).
export { gaussian, mulberry32 } from '../../database/seeded-random.js';
