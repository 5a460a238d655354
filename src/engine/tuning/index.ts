/**
 * Tuning (docs/engine.md, "Tuning"): scenarios, what-if, solvers, sensitivity and saved scenarios.
 * One entry point for the CLI and the pages.
 */
export * from './load.ts';
export * from './saved.ts';
export * from './scenario.ts';
export * from './sensitivity.ts';
export * from './solvers.ts';
export * from './types.ts';
export * from './whatif.ts';
