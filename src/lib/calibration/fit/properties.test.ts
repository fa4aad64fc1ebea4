import fc from 'fast-check';
import { describe, expect, test } from 'vitest';
import { fitLinearRelation } from './linear-fit';
import { syntheticCalibrators } from './synthetic';
import type { FitMethod } from './types';

// Property tests: invented data drawn from a known relation (synthetic.ts); a fit must recover the
// relation within its own stated errors. |estimate − truth|/σ < 5 fails by chance with p ≈ 6e−7.
const relation = fc.record({
	zeroPoint: fc.double({ min: -6, max: -2, noNaN: true }),
	slope: fc.double({ min: -3.6, max: -2.2, noNaN: true }),
	seed: fc.integer({ min: 0, max: 2 ** 31 - 1 }),
	count: fc.integer({ min: 20, max: 200 })
});

describe('fits recover the generating relation within their stated errors', () => {
	test.each<FitMethod>(['ols', 'wls'])('%s: |â − a|/σ_a < 5 and |b̂ − b|/σ_b < 5 (60 runs)', (method) => {
		fc.assert(
			fc.property(relation, ({ zeroPoint, slope, seed, count }) => {
				const points = syntheticCalibrators({ zeroPoint, slope }, { count, seed });
				const fit = fitLinearRelation(points, { method });
				expect(Math.abs(fit.coefficients.zeroPoint - zeroPoint) / (fit.errors.zeroPoint as number)).toBeLessThan(5);
				expect(Math.abs(fit.coefficients.slope - slope) / (fit.errors.slope as number)).toBeLessThan(5);
				// Errors are the true ones for wls, so χ²/dof is near 1: within 6σ of its spread √(2/dof).
				if (method === 'wls') {
					expect(Math.abs((fit.reducedChiSquare as number) - 1)).toBeLessThan(6 * Math.sqrt(2 / fit.degreesOfFreedom));
				}
			}),
			{ numRuns: 60, seed: 20261201 }
		);
	});

	test('metallicity term: |γ̂ − γ|/σ_γ < 5 with [Fe/H] spanning 0.8 dex (40 runs)', () => {
		fc.assert(
			fc.property(relation, fc.double({ min: -0.5, max: 0.1, noNaN: true }), (base, gamma) => {
				const points = syntheticCalibrators(
					{ zeroPoint: base.zeroPoint, slope: base.slope, metallicityTerm: gamma },
					{ count: base.count, seed: base.seed }
				);
				const fit = fitLinearRelation(points, { method: 'wls', metallicityTerm: true });
				expect(
					Math.abs((fit.coefficients.metallicityTerm as number) - gamma) / (fit.errors.metallicityTerm as number)
				).toBeLessThan(5);
				expect(Math.abs(fit.coefficients.slope - base.slope) / (fit.errors.slope as number)).toBeLessThan(5);
			}),
			{ numRuns: 40, seed: 7 }
		);
	});

	test('fixed slope: with the true slope adopted, |â − a|/σ_a < 5 (40 runs)', () => {
		fc.assert(
			fc.property(relation, ({ zeroPoint, slope, seed, count }) => {
				const points = syntheticCalibrators({ zeroPoint, slope, intrinsicScatter: 0.1 }, { count, seed });
				const fit = fitLinearRelation(points, { method: 'ols', fixedSlope: slope });
				expect(Math.abs(fit.coefficients.zeroPoint - zeroPoint) / (fit.errors.zeroPoint as number)).toBeLessThan(5);
			}),
			{ numRuns: 40, seed: 11 }
		);
	});

	test('ML scatter recovers σ_int: |σ̂ − σ_int|/err < 5 and the coefficients within 5σ (30 runs, 150–400 stars)', () => {
		fc.assert(
			fc.property(
				relation,
				fc.double({ min: 0.05, max: 0.3, noNaN: true }),
				fc.integer({ min: 150, max: 400 }),
				({ zeroPoint, slope, seed }, scatter, count) => {
					const points = syntheticCalibrators({ zeroPoint, slope, intrinsicScatter: scatter }, { count, seed });
					const fit = fitLinearRelation(points, { method: 'ml_scatter' });
					const estimate = fit.intrinsicScatter as { value: number; error: number };
					expect(Math.abs(estimate.value - scatter) / estimate.error).toBeLessThan(5);
					expect(Math.abs(fit.coefficients.slope - slope) / (fit.errors.slope as number)).toBeLessThan(5);
					// With σ_int in the variance the standardized residuals have unit spread: χ²/dof within 6σ of 1.
					expect(Math.abs((fit.reducedChiSquare as number) - 1)).toBeLessThan(6 * Math.sqrt(2 / fit.degreesOfFreedom));
				}
			),
			{ numRuns: 30, seed: 3 }
		);
	});

	test('ML scatter with period errors: the b²σ_logP² term keeps σ_int unbiased (σ_logP = 0.03 dex)', () => {
		// Without the term the 0.03 dex period noise (≈ 0.08 mag at b ≈ −2.7) would be absorbed into σ_int.
		const points = syntheticCalibrators(
			{ zeroPoint: -4, slope: -2.7, intrinsicScatter: 0.1 },
			{ count: 1500, seed: 99, logPeriodErr: 0.03 }
		);
		const fit = fitLinearRelation(points, { method: 'ml_scatter' });
		const naive = fitLinearRelation(
			points.map((point) => ({ ...point, logPeriodErr: null })),
			{ method: 'ml_scatter' }
		);
		const estimate = fit.intrinsicScatter as { value: number; error: number };
		expect(Math.abs(estimate.value - 0.1) / estimate.error).toBeLessThan(5);
		expect((naive.intrinsicScatter as { value: number }).value).toBeGreaterThan(0.11);
	});
});

describe('invariances', () => {
	test('a constant added to every magnitude moves only the zero point, by that constant', () => {
		fc.assert(
			fc.property(
				relation,
				fc.double({ min: -30, max: 30, noNaN: true }),
				({ zeroPoint, slope, seed, count }, shift) => {
					const points = syntheticCalibrators({ zeroPoint, slope }, { count, seed });
					const base = fitLinearRelation(points, { method: 'ml_scatter' });
					const moved = fitLinearRelation(
						points.map((point) => ({ ...point, absMag: point.absMag + shift })),
						{ method: 'ml_scatter' }
					);
					expect(moved.coefficients.zeroPoint - base.coefficients.zeroPoint).toBeCloseTo(shift, 8);
					expect(moved.coefficients.slope).toBeCloseTo(base.coefficients.slope, 8);
				}
			),
			{ numRuns: 25, seed: 5 }
		);
	});

	test('the order of the calibrators does not matter (to 1e-12)', () => {
		fc.assert(
			fc.property(relation, ({ zeroPoint, slope, seed, count }) => {
				const points = syntheticCalibrators({ zeroPoint, slope, intrinsicScatter: 0.05 }, { count, seed });
				const forward = fitLinearRelation(points, { method: 'wls' });
				const reversed = fitLinearRelation([...points].reverse(), { method: 'wls' });
				expect(Math.abs(forward.coefficients.slope - reversed.coefficients.slope)).toBeLessThan(1e-12);
				expect(Math.abs(forward.coefficients.zeroPoint - reversed.coefficients.zeroPoint)).toBeLessThan(1e-12);
			}),
			{ numRuns: 30, seed: 13 }
		);
	});
});
