/**
 * Version of the numerical engine, recorded in every fit result and frozen relation version.
 * Bump it whenever any computed number can change (formulas, defaults, clipping rules, constants).
 */
export const ENGINE_VERSION = '1.0.0';
