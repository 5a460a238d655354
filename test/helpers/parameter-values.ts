/**
 * Fitted values for the parameter-set tests, built in code (invented numbers; the shapes of
 * src/engine/parameter-set-types.ts).
 */
import type {
  FittedAdders,
  FittedRemoval,
  FittedUnexplainedVoids,
  FittedVoidSize,
  ParameterValues,
} from '../../src/engine/parameter-set-types.ts';

const PROV = { method: 'hand-made for a test', data: ['test'], n: 10, fittedAtMs: Date.UTC(2030, 0, 1) };

export function fittedAdders(
  toolId: string,
  chamber: string | null,
  over: Partial<FittedAdders> = {},
): FittedAdders {
  return {
    ...PROV,
    toolId,
    chamber,
    countAbove: 3,
    countLow: 2,
    countHigh: 4.5,
    atDiameterM: 45e-9,
    slope: 2.5,
    slopeSe: 0.2,
    passes: 12,
    dispersionIndex: 1.1,
    ...over,
  };
}

export function fittedRemoval(cleanId: string, over: Partial<FittedRemoval> = {}): FittedRemoval {
  return {
    ...PROV,
    cleanId,
    maxEfficiency: 0.95,
    halfSizeM: 60e-9,
    widthDecades: 0.2,
    halfSizeLowM: 50e-9,
    halfSizeHighM: 70e-9,
    widthLowDecades: 0.15,
    widthHighDecades: 0.25,
    ...over,
  };
}

export function fittedVoidSize(productId: string, over: Partial<FittedVoidSize> = {}): FittedVoidSize {
  return {
    ...PROV,
    productId,
    energyJm2: 1.2,
    energyLowJm2: 1.0,
    energyHighJm2: 1.4,
    radiusMultiplier: 0.917,
    ...over,
  };
}

export function fittedUnexplained(
  productId: string,
  over: Partial<FittedUnexplainedVoids> = {},
): FittedUnexplainedVoids {
  return {
    ...PROV,
    productId,
    ratePerPair: 2,
    rateLowPerPair: 1,
    rateHighPerPair: 3.5,
    meanAreaM2: Math.PI * 1e-6, // a 2 mm void
    meanDiameterM: 2e-3,
    ...over,
  };
}

export function values(over: Partial<ParameterValues> = {}): ParameterValues {
  return { adders: {}, removal: {}, voidSize: {}, unexplainedVoids: {}, ...over };
}
