/** Matching the defects of two scans of one wafer (methods.md §1): frames, grid index, matching. */
export * from './frame.ts';
export * from './grid.ts';
export * from './match.ts';
export * from './offset.ts';
