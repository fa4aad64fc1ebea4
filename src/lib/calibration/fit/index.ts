/**
 * Linear period–luminosity fits of calibrators with known absolute magnitudes.
 *
 * - `fitLinearRelation(points, options)`: M = a + b(log P − p0) [+ γ([Fe/H] − f0)] by ols, wls or
 *   ml_scatter, with fixed slope or zero point, σ-clipping and a seeded bootstrap.
 * - `solveLeastSquares({ design, response, weights })`: the QR least-squares routine underneath,
 *   for any design matrix.
 * - `syntheticCalibrators(relation, options)`: invented calibrators from a known relation (demos, checks).
 */
export { fitLinearRelation } from './linear-fit';
export { solveLeastSquares, RankDeficientDesignError } from './least-squares';
export type { LeastSquaresProblem, LeastSquaresSolution } from './least-squares';
export { clipIteratively } from './clipping';
export { bootstrapParameters, sortedQuantile, DEFAULT_BOOTSTRAP_LEVEL } from './bootstrap';
export { createIndexDrawer, RESAMPLING_GENERATOR } from './random';
export { validateFitInput, countFreeCoefficients, minimumStars } from './validation';
export * from './types';
export { syntheticCalibrators, createGaussianStream } from './synthetic';
export type { SyntheticRelation, SyntheticSampleOptions } from './synthetic';
export * from './fit-quality';
