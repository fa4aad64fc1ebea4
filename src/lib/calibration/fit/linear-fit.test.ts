import MultivariateLinearRegression from 'ml-regression-multivariate-linear';
import { SimpleLinearRegression } from 'ml-regression-simple-linear';
import { describe, expect, test } from 'vitest';
import { CalibrationInputError } from '../types';
import { fitLinearRelation } from './linear-fit';
import { syntheticCalibrators } from './synthetic';
import type { CalibratorPoint, LinearFitOptions } from './types';

const SAMPLE = syntheticCalibrators(
	{ zeroPoint: -4.0, slope: -2.7, metallicityTerm: -0.2, intrinsicScatter: 0.08 },
	{ count: 80, seed: 11 }
);

function issuesOf(run: () => unknown) {
	try {
		run();
	} catch (error) {
		if (error instanceof CalibrationInputError) return error.issues;
		throw error;
	}
	throw new Error('expected a CalibrationInputError');
}

describe('ordinary least squares', () => {
	// Cross-check against ml-regression-simple-linear (an independent OLS implementation from npm).
	test('coefficients equal SimpleLinearRegression on the same (log P − p0, M) to 1e-12', () => {
		const fit = fitLinearRelation(SAMPLE, { method: 'ols' });
		const reference = new SimpleLinearRegression(
			SAMPLE.map((point) => point.logPeriod - 1),
			SAMPLE.map((point) => point.absMag)
		);
		expect(Math.abs(fit.coefficients.slope - reference.slope)).toBeLessThan(1e-12);
		expect(Math.abs(fit.coefficients.zeroPoint - reference.intercept)).toBeLessThan(1e-12);
		expect(fit.covarianceScaling).toBe('residual_variance');
		expect(fit.degreesOfFreedom).toBe(78);
		const logPeriods = SAMPLE.map((point) => point.logPeriod);
		expect(fit.validity).toEqual({
			logPeriodMin: Math.min(...logPeriods),
			logPeriodMax: Math.max(...logPeriods),
			fehMin: null,
			fehMax: null
		});
	});

	// Cross-check against ml-regression-multivariate-linear (npm): coefficients and standard errors.
	test('metallicity term as a second predictor equals MultivariateLinearRegression to 1e-10', () => {
		const fit = fitLinearRelation(SAMPLE, { method: 'ols', metallicityTerm: true, pivotFeh: 0 });
		const reference = new MultivariateLinearRegression(
			SAMPLE.map((point) => [point.logPeriod - 1, point.feh as number]),
			SAMPLE.map((point) => [point.absMag]),
			{ intercept: true, statistics: true }
		);
		expect(fit.covariance.axes).toEqual(['zero_point', 'slope', 'metallicity_term']);
		expect(Math.abs(fit.coefficients.slope - reference.weights[0][0])).toBeLessThan(1e-10);
		expect(Math.abs((fit.coefficients.metallicityTerm as number) - reference.weights[1][0])).toBeLessThan(1e-10);
		expect(Math.abs(fit.coefficients.zeroPoint - reference.weights[2][0])).toBeLessThan(1e-10);
		expect(Math.abs((fit.errors.slope as number) - reference.stdErrors[0])).toBeLessThan(1e-10);
		expect(Math.abs((fit.errors.metallicityTerm as number) - reference.stdErrors[1])).toBeLessThan(1e-10);
		expect(Math.abs((fit.errors.zeroPoint as number) - reference.stdErrors[2])).toBeLessThan(1e-10);
	});

	test('pivots only move the zero point: a(p0 = 1) = a(p0 = 0) + b', () => {
		// Common practice: M = a' + b·log P = a + b(log P − 1) gives a = a' + b.
		const atOne = fitLinearRelation(SAMPLE, { method: 'ols', pivotLogPeriod: 1 });
		const atZero = fitLinearRelation(SAMPLE, { method: 'ols', pivotLogPeriod: 0 });
		expect(atOne.coefficients.slope).toBeCloseTo(atZero.coefficients.slope, 12);
		expect(atOne.coefficients.zeroPoint).toBeCloseTo(atZero.coefficients.zeroPoint + atZero.coefficients.slope, 12);
		// Pivot at log P = 1 sits near the sample's mean log P, so a and b decorrelate there.
		const correlation = (fit: typeof atOne) =>
			fit.covariance.matrix[0][1] / Math.sqrt(fit.covariance.matrix[0][0] * fit.covariance.matrix[1][1]);
		expect(Math.abs(correlation(atOne))).toBeLessThan(Math.abs(correlation(atZero)));
	});
});

describe('weighted least squares', () => {
	const equalErrors = SAMPLE.map((point) => ({ ...point, absMagErr: 0.1 }));

	test('with equal errors it gives the OLS coefficients, absolute covariance σ²(XᵀX)⁻¹ and χ² = RSS/σ²', () => {
		// Identity of weighted least squares with constant weights (common practice).
		const ols = fitLinearRelation(equalErrors, { method: 'ols' });
		const wls = fitLinearRelation(equalErrors, { method: 'wls', weightedCovariance: 'absolute' });
		expect(wls.coefficients.slope).toBeCloseTo(ols.coefficients.slope, 12);
		expect(wls.coefficients.zeroPoint).toBeCloseTo(ols.coefficients.zeroPoint, 12);
		const s2 = ols.residualSd ** 2;
		expect(wls.covariance.matrix[1][1]).toBeCloseTo((ols.covariance.matrix[1][1] / s2) * 0.01, 14);
		expect(wls.chiSquare as number).toBeCloseTo((s2 * ols.degreesOfFreedom) / 0.01, 9);
		expect(wls.reducedChiSquare as number).toBeCloseTo(s2 / 0.01, 10);
		expect(wls.covarianceScaling).toBe('absolute');
		expect(wls.covarianceScaled).toBe(false);
	});

	test('by default the covariance is scaled by χ²/dof only when χ²/dof > 1, and says so', () => {
		// Common practice: scatter beyond the stated errors widens the error bars; a lucky fit never narrows them.
		const ols = fitLinearRelation(equalErrors, { method: 'ols' });
		const tooSmall = fitLinearRelation(equalErrors, { method: 'wls' });
		expect(tooSmall.reducedChiSquare as number).toBeGreaterThan(1);
		expect(tooSmall.covarianceScaling).toBe('reduced_chi_square_above_one');
		expect(tooSmall.covarianceScaled).toBe(true);
		expect(tooSmall.errors.zeroPoint as number).toBeCloseTo(ols.errors.zeroPoint as number, 14);
		const generous = SAMPLE.map((point) => ({ ...point, absMagErr: 10 }));
		const wide = fitLinearRelation(generous, { method: 'wls' });
		const absolute = fitLinearRelation(generous, { method: 'wls', weightedCovariance: 'absolute' });
		expect(wide.reducedChiSquare as number).toBeLessThan(1);
		expect(wide.covarianceScaled).toBe(false);
		expect(wide.covariance.matrix).toEqual(absolute.covariance.matrix);
	});

	test('reduced-χ² scaling turns the equal-error WLS covariance into the OLS covariance', () => {
		const ols = fitLinearRelation(equalErrors, { method: 'ols' });
		const scaled = fitLinearRelation(equalErrors, { method: 'wls', weightedCovariance: 'reduced_chi_square' });
		expect(scaled.covarianceScaling).toBe('reduced_chi_square');
		for (let a = 0; a < 2; a++) {
			for (let b = 0; b < 2; b++) {
				expect(scaled.covariance.matrix[a][b]).toBeCloseTo(ols.covariance.matrix[a][b], 14);
			}
		}
	});

	test('a star with four times the error counts one sixteenth as much', () => {
		// 1/σ² weighting; weight 1/16 is the same as 1/16 of a copy. Compare with duplicating the others 16 times.
		const points: CalibratorPoint[] = [
			{ star: 'a', logPeriod: 0.5, absMag: -3.0, absMagErr: 0.1 },
			{ star: 'b', logPeriod: 1.0, absMag: -4.5, absMagErr: 0.1 },
			{ star: 'c', logPeriod: 1.5, absMag: -5.6, absMagErr: 0.4 },
			{ star: 'd', logPeriod: 1.2, absMag: -4.9, absMagErr: 0.1 }
		];
		const wls = fitLinearRelation(points, { method: 'wls' });
		const repeated = points.flatMap((point) =>
			point.star === 'c' ? [point] : Array.from({ length: 16 }, (_, k) => ({ ...point, star: `${point.star}${k}` }))
		);
		const ols = fitLinearRelation(repeated, { method: 'ols' });
		expect(wls.coefficients.slope).toBeCloseTo(ols.coefficients.slope, 12);
		expect(wls.coefficients.zeroPoint).toBeCloseTo(ols.coefficients.zeroPoint, 12);
	});

	test('period errors of zero change nothing; non-zero period errors add b²σ_logP² to each variance', () => {
		const plain = fitLinearRelation(SAMPLE, { method: 'wls' });
		const zeroErrors = fitLinearRelation(
			SAMPLE.map((point) => ({ ...point, logPeriodErr: 0 })),
			{ method: 'wls' }
		);
		expect(zeroErrors.coefficients).toEqual(plain.coefficients);
		const withErrors = SAMPLE.map((point) => ({ ...point, logPeriodErr: 0.02 }));
		const fit = fitLinearRelation(withErrors, { method: 'wls' });
		// Self-consistency of the effective-variance solution: χ² uses the fitted slope in vᵢ.
		const b = fit.coefficients.slope;
		let chi2 = 0;
		for (const point of withErrors) {
			const residual = point.absMag - fit.coefficients.zeroPoint - b * (point.logPeriod - 1);
			chi2 += residual ** 2 / (point.absMagErr ** 2 + b * b * 0.02 ** 2);
		}
		expect(fit.chiSquare as number).toBeCloseTo(chi2, 9);
		expect(fit.chiSquare as number).toBeLessThan(plain.chiSquare as number);
	});
});

describe('maximum-likelihood intrinsic scatter', () => {
	test('with equal errors σ_e the ML solution is closed form: OLS line and σ_int² = RSS/n − σ_e²', () => {
		// For constant variance V the Gaussian likelihood is maximised by the OLS line and V = RSS/n
		// (common practice); with V = σ_e² + σ_int².
		const points = SAMPLE.map((point) => ({ ...point, absMagErr: 0.05 }));
		const ml = fitLinearRelation(points, { method: 'ml_scatter' });
		const ols = fitLinearRelation(points, { method: 'ols' });
		const rss = ols.residualSd ** 2 * ols.degreesOfFreedom;
		const expected = Math.sqrt(rss / points.length - 0.05 ** 2);
		const scatter = ml.intrinsicScatter as { value: number; error: number };
		expect(Math.abs(scatter.value - expected)).toBeLessThan(1e-8);
		expect(Math.abs(ml.coefficients.slope - ols.coefficients.slope)).toBeLessThan(1e-8);
		expect(ml.degreesOfFreedom).toBe(points.length - 3);
		// Fisher information for V: var(V̂) = 2V²/n, so σ(σ_int) ≈ √(2/n)·V/(2σ_int) (common practice).
		const variance = rss / points.length;
		const fisher = (Math.sqrt(2 / points.length) * variance) / (2 * expected);
		expect(Math.abs(scatter.error / fisher - 1)).toBeLessThan(0.1);
		expect(ml.logLikelihood).not.toBeNull();
	});

	test('σ_int is 0 when the measurement errors already explain the scatter', () => {
		// Generated with 0.1 mag noise, then given (overstated) 0.3 mag errors.
		const points = syntheticCalibrators(
			{ zeroPoint: -4, slope: -2.7 },
			{ count: 60, seed: 3, absMagErrRange: [0.1, 0.1] }
		).map((point) => ({ ...point, absMagErr: 0.3 }));
		const ml = fitLinearRelation(points, { method: 'ml_scatter' });
		const ols = fitLinearRelation(points, { method: 'ols' });
		const rssPerStar = (ols.residualSd ** 2 * ols.degreesOfFreedom) / points.length;
		expect(rssPerStar).toBeLessThan(0.09);
		expect((ml.intrinsicScatter as { value: number }).value).toBeLessThan(1e-6);
	});
});

describe('fixed slope and fixed zero point', () => {
	test('a fixed slope fits the zero point only: a = mean(M − b(log P − p0)), σ_a = s/√n', () => {
		// Common practice (slope adopted from another relation).
		const fit = fitLinearRelation(SAMPLE, { method: 'ols', fixedSlope: -3.0 });
		const shifted = SAMPLE.map((point) => point.absMag + 3.0 * (point.logPeriod - 1));
		const mean = shifted.reduce((sum, value) => sum + value, 0) / shifted.length;
		const s = Math.sqrt(shifted.reduce((sum, value) => sum + (value - mean) ** 2, 0) / (shifted.length - 1));
		expect(fit.coefficients.slope).toBe(-3.0);
		expect(fit.coefficients.zeroPoint).toBeCloseTo(mean, 12);
		expect(fit.errors.zeroPoint as number).toBeCloseTo(s / Math.sqrt(shifted.length), 12);
		expect(fit.errors.slope).toBeNull();
		expect(fit.fixed).toEqual({ zeroPoint: false, slope: true });
		expect(fit.covariance.axes).toEqual(['zero_point']);
		expect(fit.rSquared).toBeNull();
	});

	test('a fixed zero point fits the slope through (p0, a): b = Σx(M − a)/Σx²', () => {
		const fit = fitLinearRelation(SAMPLE, { method: 'ols', fixedZeroPoint: -4.0 });
		let numerator = 0;
		let denominator = 0;
		for (const point of SAMPLE) {
			numerator += (point.logPeriod - 1) * (point.absMag + 4.0);
			denominator += (point.logPeriod - 1) ** 2;
		}
		expect(fit.coefficients.slope).toBeCloseTo(numerator / denominator, 12);
		expect(fit.coefficients.zeroPoint).toBe(-4.0);
		expect(fit.covariance.axes).toEqual(['slope']);
	});
});

describe('σ-clipping', () => {
	test('an injected 1.5 mag outlier is rejected in round 1 with a readable reason; the clean stars stay', () => {
		const points = SAMPLE.map((point, k) => (k === 7 ? { ...point, absMag: point.absMag + 1.5 } : point));
		const fit = fitLinearRelation(points, { method: 'ml_scatter', clipping: { sigma: 4, maxIterations: 5 } });
		expect(fit.rejected.map((rejection) => rejection.star)).toEqual([SAMPLE[7].star]);
		expect(fit.rejected[0].iteration).toBe(1);
		expect(fit.rejected[0].reason).toMatch(/^\|r\|\/σ = \d+\.\d\d > 4\.0 in round 1$/);
		expect(fit.rejected[0].standardizedResidual).toBeGreaterThan(4);
		expect(fit.starsUsed).toBe(79);
		expect(fit.residuals[7].used).toBe(false);
		expect(fit.clippingRounds).toBe(2);
		// After rejection the fit equals a fit to the clean stars alone.
		const clean = fitLinearRelation(
			points.filter((_, k) => k !== 7),
			{ method: 'ml_scatter' }
		);
		expect(fit.coefficients).toEqual(clean.coefficients);
	});

	test('clipping stops at maxIterations even if stars would still be rejected', () => {
		const points = SAMPLE.map((point, k) => ({
			...point,
			absMag: point.absMag + (k % 2 === 0 ? 0.3 : -0.3) * (k / 80)
		}));
		const fit = fitLinearRelation(points, { method: 'ols', clipping: { sigma: 1, maxIterations: 2 } });
		expect(fit.clippingRounds).toBe(2);
		expect(Math.max(...fit.rejected.map((rejection) => rejection.iteration))).toBeLessThanOrEqual(2);
	});
});

describe('input validation', () => {
	test('NaN, Infinity and non-positive WLS errors are reported with star and field, all at once', () => {
		const points: CalibratorPoint[] = [
			{ star: 'alpha', logPeriod: Number.NaN, absMag: -4, absMagErr: 0.1 },
			{ star: 'beta', logPeriod: 1, absMag: Infinity, absMagErr: 0.1 },
			{ star: 'gamma', logPeriod: 1.2, absMag: -5, absMagErr: 0 },
			{ star: 'delta', logPeriod: 1.4, absMag: -5, absMagErr: 0.1 }
		];
		const issues = issuesOf(() => fitLinearRelation(points, { method: 'wls' }));
		expect(issues).toEqual(
			expect.arrayContaining([
				expect.objectContaining({ star: 'alpha', field: 'logPeriod' }),
				expect.objectContaining({ star: 'beta', field: 'absMag' }),
				expect.objectContaining({ star: 'gamma', field: 'absMagErr' })
			])
		);
		// Zero errors are acceptable for ordinary least squares.
		expect(() => fitLinearRelation(points.slice(2), { method: 'ols', fixedSlope: -2.5 })).not.toThrow();
	});

	test.each<[string, LinearFitOptions, number, string]>([
		['two free coefficients need three stars', { method: 'ols' }, 2, 'points'],
		['ML scatter needs one more', { method: 'ml_scatter' }, 3, 'points'],
		['a metallicity term needs four with OLS', { method: 'ols', metallicityTerm: true }, 3, 'points'],
		[
			'slope and zero point cannot both be fixed',
			{ method: 'ols', fixedSlope: -3, fixedZeroPoint: -4 },
			10,
			'fixedZeroPoint'
		],
		['clipping needs a positive σ', { method: 'ols', clipping: { sigma: 0, maxIterations: 3 } }, 10, 'clipping.sigma'],
		[
			'bootstrap seed must be a 32-bit unsigned integer',
			{ method: 'ols', bootstrap: { resamples: 10, seed: -1 } },
			10,
			'bootstrap.seed'
		],
		['unknown method', { method: 'median' as 'ols' }, 10, 'method']
	])('%s', (_, options, count, field) => {
		const issues = issuesOf(() => fitLinearRelation(SAMPLE.slice(0, count), options));
		expect(issues.map((issue) => issue.field)).toContain(field);
	});

	test('a metallicity fit names the stars without [Fe/H]; duplicate names are refused', () => {
		const points = SAMPLE.slice(0, 6).map((point, k) => (k === 2 ? { ...point, feh: null } : point));
		points.push({ ...points[0] });
		const issues = issuesOf(() => fitLinearRelation(points, { method: 'ols', metallicityTerm: true }));
		expect(issues).toContainEqual(expect.objectContaining({ star: SAMPLE[2].star, field: 'feh' }));
		expect(issues).toContainEqual(expect.objectContaining({ star: SAMPLE[0].star, field: 'star' }));
	});

	test('calibrators that all share one period cannot fix a slope', () => {
		const points = SAMPLE.slice(0, 5).map((point) => ({ ...point, logPeriod: 1.1 }));
		const issues = issuesOf(() => fitLinearRelation(points, { method: 'ols' }));
		expect(issues[0].field).toBe('logPeriod');
	});
});

test('the same input gives the same bits (JSON of two runs identical)', () => {
	const options: LinearFitOptions = {
		method: 'ml_scatter',
		metallicityTerm: true,
		clipping: { sigma: 3, maxIterations: 5 },
		bootstrap: { resamples: 50, seed: 7 }
	};
	expect(JSON.stringify(fitLinearRelation(SAMPLE, options))).toBe(JSON.stringify(fitLinearRelation(SAMPLE, options)));
});
