/** What bench/walk.mjs needs from the checkout it measures: the multiplet layout and the pool's planner. */
export { createIndexing, multipletCount } from '../src/engine/multiplets';
export { planUnits } from '../src/worker/units';
