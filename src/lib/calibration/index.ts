/**
 * Candlebook's calibration core: pure functions over plain data, shared by the server, the API,
 * workers and the browser. Nothing here imports a framework, the database or the DOM.
 */
export * from './types';
export * from './engine-version';
export * from './constants';
export * from './bands';
export * from './extinction';
export * from './units';
export * from './parallax';
export * from './populations';
export * from './calibrators';
export * from './fit/index';
export * from './parallax-fit';
export * from './apply';
export * from './host-distance';
export * from './velocity';
export * from './mean-magnitude';
export * from './frozen-content';
export * from './digest';
export * from './calibrator-table/index';
export * from './refit';
export * from './light-curves/index';
export * from './systematics';
