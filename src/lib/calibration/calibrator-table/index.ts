export * from './fields';
export * from './parse';
export * from './export';
export * from './diff';
export * from './to-calibrator-rows';
export * from './light-curve-values';
