/**
 * jstat 1.9.6 (devDependency), the outside reference library for the statistics tests.
 *
 * jstat is a CommonJS/UMD bundle (`module.exports = jStat`, with `jStat.jStat = jStat`) and ships
 * no type declarations, so it is loaded with Node's require and typed here for the functions the
 * tests use.
 */
import { createRequire } from 'node:module';

export interface JStat {
  gammaln(x: number): number;
  lowRegGamma(a: number, x: number): number;
  chisquare: { cdf(x: number, k: number): number; inv(p: number, k: number): number };
  normal: {
    inv(p: number, mean: number, sd: number): number;
    cdf(x: number, mean: number, sd: number): number;
  };
  studentt: { cdf(x: number, dof: number): number; inv(p: number, dof: number): number };
  ibeta(x: number, a: number, b: number): number;
  beta: { inv(p: number, a: number, b: number): number };
}

export const jStat = createRequire(import.meta.url)('jstat') as JStat;
