import { describe, expect, test } from 'vitest';
import { runsInBackground, specFromRequest } from './fits';
import { defaultMagnitudeSystem } from './relations';
import { FitRequestSchema } from './schemas';

const request = (extra: Record<string, unknown> = {}) =>
	FitRequestSchema.parse({
		calibrator_set: 'invented-set',
		revision: 1,
		band: 'W_VI',
		population: 'classical_fundamental',
		anchor: 'host',
		method: 'ml_scatter',
		...extra
	});

describe('fit requests', () => {
	test('defaults fill every setting the engine needs, in camelCase', () => {
		expect(specFromRequest(request({ clipping: { sigma: 3, max_iterations: 5 } }))).toEqual({
			bandId: 'W_VI',
			population: 'classical_fundamental',
			anchor: 'host',
			form: 'period_luminosity',
			method: 'ml_scatter',
			pivotLogPeriod: 1,
			pivotFeh: 0,
			periodFilter: { logPeriodMin: null, logPeriodMax: null },
			fundamentalise: false,
			fixedSlope: null,
			fixedZeroPoint: null,
			clipping: { sigma: 3, maxIterations: 5 },
			extinctionLaw: null,
			rV: null,
			parallaxOffset: null,
			bootstrap: null,
			weightedCovariance: 'absolute',
			assumedIntrinsicScatter: null,
			intrinsicScatterEstimator: 'reml',
			fixedSlopeError: null,
			wesenheitRatio: null
		});
		expect(specFromRequest(request({ intrinsic_scatter_estimator: 'ml' })).intrinsicScatterEstimator).toBe('ml');
		expect(specFromRequest(request({ method: 'wls' })).intrinsicScatterEstimator).toBeNull();
	});

	test('weighted least squares scales by χ²/dof above 1 unless `absolute` is asked for', () => {
		// Common practice: a wls covariance that ignores excess scatter understates the errors.
		expect(specFromRequest(request({ method: 'wls' })).weightedCovariance).toBe('reduced_chi_square_above_one');
		expect(specFromRequest(request({ method: 'wls', weighted_covariance: 'absolute' })).weightedCovariance).toBe(
			'absolute'
		);
		expect(() => request({ wesenheit_ratio: { value: 1.4, reason: '' } })).toThrow();
		expect(
			specFromRequest(request({ wesenheit_ratio: { value: 1.4, reason: 'CCM89, R_V = 3.1' } })).wesenheitRatio
		).toEqual({ value: 1.4, reason: 'CCM89, R_V = 3.1' });
	});

	test.each([
		[{}, 40, false],
		[{ bootstrap: { resamples: 199, seed: 1 } }, 40, false],
		[{ bootstrap: { resamples: 200, seed: 1 } }, 40, true],
		[{}, 5000, true]
	])('%j with %i stars runs in the background: %s', (extra, stars, background) => {
		expect(runsInBackground(request(extra), stars, { bootstrapResamples: 200, stars: 5000 })).toBe(background);
	});

	test('unknown fields and impossible values are refused', () => {
		expect(FitRequestSchema.safeParse({ ...request(), sigma: 3 }).success).toBe(false);
		expect(FitRequestSchema.safeParse({ ...request(), bootstrap: { resamples: 0, seed: 1 } }).success).toBe(false);
	});
});

describe('relations', () => {
	test.each([
		['V', 'Vega'],
		['W_VI', 'Vega'],
		['G', 'Vega']
	])('band %s defaults to the %s system of its catalogue', (band, system) => {
		expect(defaultMagnitudeSystem(band)).toBe(system);
	});
});
