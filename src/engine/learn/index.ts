/**
 * Learning from the line's own scans: adders per wafer pass of each tool and chamber, and the
 * removal curve of each clean (docs/engine.md "Learning from the line"). The results carry the
 * proposals a parameter set takes (src/engine/parameter-set-types.ts) or the reason there is none.
 */
export { learnAdders, learnAddersFrom, learnToolAdders } from './adders.ts';
export {
  MIN_ADDER_PASSES,
  MIN_REMOVAL_OUTCOMES,
  MIN_REMOVAL_PARTICLES,
  MIN_SIZE_SPREAD,
  MIN_SLOPE_ADDERS,
} from './common.ts';
export { type LearnData, learnDataFrom } from './loader.ts';
export {
  CAPTURE_FRACTION,
  DEFAULT_SIGMA_M,
  MIN_SIGMA_MATCHES,
  NEAR_THRESHOLD_FACTOR,
  SEARCH_RADIUS_M,
} from './match-pass.ts';
export { collectPasses, type ScanPass } from './passes.ts';
export { learnCleanRemoval, learnRemoval, learnRemovalFrom, survivalBands } from './removal.ts';
export type * from './types.ts';
