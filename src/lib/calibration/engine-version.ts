/**
 * Version of the numerical engine, recorded in every fit result and frozen relation version.
 * Bump it whenever any computed number can change (formulas, defaults, clipping rules, constants).
 * 2.0.0: weighted fits scale their covariance by χ²/dof above 1 by default; versions record their
 * shared systematics, fit quality and Wesenheit R (versions frozen by 1.x keep their content).
 */
export const ENGINE_VERSION = '2.0.0';
