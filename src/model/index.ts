/**
 * The model library: every formula of the risk chain, pure functions in SI units.
 * See docs/models.md for each function's formula, source and validity.
 */
export * from './adders-fit.ts';
export * from './aerosol.ts';
export * from './audit-levels.ts';
export * from './cc1246.ts';
export * from './clean.ts';
export * from './control-charts.ts';
export * from './deposition.ts';
export * from './errors.ts';
export * from './iso14644.ts';
export * from './matching/index.ts';
export * from './removal-fit.ts';
export * from './rng.ts';
export * from './spectrum.ts';
export * from './spectrum-channels.ts';
export * from './stats/beta.ts';
export * from './stats/binomial.ts';
export * from './stats/chi-square.ts';
export * from './stats/dispersion.ts';
export * from './stats/gamma.ts';
export * from './stats/garwood.ts';
export * from './stats/hill.ts';
export * from './stats/linalg.ts';
export * from './stats/normal.ts';
export * from './stats/student-t.ts';
export * from './units.ts';
export * from './void.ts';
export * from './yield.ts';
