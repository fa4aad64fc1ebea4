import { describe, expect, test } from 'vitest';
import { fitQualityOf, fitQualityWarning, reducedChiSquareLimit, weightedCovarianceFactor } from './fit-quality';

// χ²/dof of Gaussian errors has mean 1 and standard deviation √(2/dof) (common practice); the limit is 3σ above.
describe('fit quality', () => {
	test('the limit is 1 + 3·√(2/dof), and only a fit above it warns, with its numbers', () => {
		const started = performance.now();
		expect(reducedChiSquareLimit(18)).toBeCloseTo(2, 14);
		expect(reducedChiSquareLimit(0)).toBeNull();
		expect(fitQualityOf(1.99, 18, false).errorsTooSmall).toBe(false);
		const bad = fitQualityOf(2.01, 18, true);
		expect(bad.errorsTooSmall).toBe(true);
		const warning = fitQualityWarning(bad);
		expect(warning?.code).toBe('errors_too_small');
		expect(warning?.message).toContain('χ²/dof = 2.01 on 18 degrees of freedom exceeds 1 + 3·√(2/dof) = 2.00');
		expect(warning?.details).toEqual({
			reducedChiSquare: 2.01,
			degreesOfFreedom: 18,
			limit: 2,
			covarianceScaled: 'true'
		});
		expect(fitQualityWarning(fitQualityOf(1.5, 18, false))).toBeNull();
		expect(fitQualityWarning(fitQualityOf(null, 18, false))).toBeNull();
		console.log(`fit quality limits: ${(performance.now() - started).toFixed(1)} ms`);
	});

	test('scaling rules: absolute never scales, above-one never shrinks, reduced-χ² always scales', () => {
		expect(weightedCovarianceFactor('absolute', 7.5)).toBe(1);
		expect(weightedCovarianceFactor('reduced_chi_square_above_one', 7.5)).toBe(7.5);
		expect(weightedCovarianceFactor('reduced_chi_square_above_one', 0.4)).toBe(1);
		expect(weightedCovarianceFactor('reduced_chi_square', 0.4)).toBe(0.4);
		expect(weightedCovarianceFactor('reduced_chi_square', null)).toBe(1);
	});
});
