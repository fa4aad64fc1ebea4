import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { ASTROPY_MISSING_REASON, hasAstropy, runPython } from '../../../../tests/support/astropy';
import { fitLinearRelation } from './linear-fit';
import { syntheticCalibrators } from './synthetic';
import type { CalibratorPoint } from './types';

let started = 0;
beforeAll(() => {
	started = performance.now();
});
afterAll(() => {
	console.log(`[intrinsic-scatter] ${(performance.now() - started).toFixed(0)} ms`);
});

const TRUTH = { zeroPoint: -4.05, slope: -2.43, intrinsicScatter: 0.12 };

/** The same photometric error for every star, so the estimators have closed forms. */
function equalErrors(count: number, seed: number, error = 0.05): CalibratorPoint[] {
	return syntheticCalibrators(TRUTH, { count, seed, absMagErrRange: [error, error] });
}

function residualSumOfSquares(points: CalibratorPoint[]): number {
	const ols = fitLinearRelation(points, { method: 'ols' });
	return ols.residuals.reduce((sum, star) => sum + star.residual ** 2, 0);
}

describe('intrinsic scatter: ML and REML', () => {
	test('equal errors σ: ML gives Σr²/n − σ², REML the unbiased Σr²/(n − p) − σ²', () => {
		// Closed forms for a homoscedastic linear model (Patterson & Thompson 1971, Biometrika 58, 545;
		// Harville 1977, JASA 72, 320): the weighted fit equals OLS, so Σr² is OLS's.
		const points = equalErrors(25, 41);
		const rss = residualSumOfSquares(points);
		const n = points.length;
		const p = 2;
		const ml = fitLinearRelation(points, { method: 'ml_scatter', intrinsicScatterEstimator: 'ml' });
		const reml = fitLinearRelation(points, { method: 'ml_scatter', intrinsicScatterEstimator: 'reml' });
		expect((ml.intrinsicScatter?.value as number) ** 2).toBeCloseTo(rss / n - 0.05 ** 2, 10);
		expect((reml.intrinsicScatter?.value as number) ** 2).toBeCloseTo(rss / (n - p) - 0.05 ** 2, 10);
		expect(ml.intrinsicScatterEstimator).toBe('ml');
		expect(reml.intrinsicScatterEstimator).toBe('reml');
		// Same weights for every star, so both estimators give the same line.
		expect(reml.coefficients.slope).toBeCloseTo(ml.coefficients.slope, 10);
	});

	test('the default stays ML, so relations fitted before REML was offered reproduce bit for bit', () => {
		const points = equalErrors(30, 7);
		const implicit = fitLinearRelation(points, { method: 'ml_scatter' });
		const explicit = fitLinearRelation(points, { method: 'ml_scatter', intrinsicScatterEstimator: 'ml' });
		expect(implicit.intrinsicScatter).toStrictEqual(explicit.intrinsicScatter);
		expect(implicit.coefficients).toStrictEqual(explicit.coefficients);
	});

	test('over 400 samples of 20 REML is unbiased in σ_int² and ML low by about (n − p)/n', () => {
		// With equal errors E[Σr²] = (n − p)(σ² + σ_int²) (common practice), so E[σ²_REML] = σ_int² while
		// E[σ²_ML] = (n − p)/n·(σ² + σ_int²) − σ². Both are truncated at 0; with σ_int = 0.2 and σ = 0.02
		// that is 2.9 standard deviations away and does not bias the means measurably.
		const n = 20;
		const truth = { ...TRUTH, intrinsicScatter: 0.2 };
		let mlSum = 0;
		let remlSum = 0;
		const samples = 400;
		for (let seed = 1; seed <= samples; seed++) {
			const points = syntheticCalibrators(truth, { count: n, seed: 1000 + seed, absMagErrRange: [0.02, 0.02] });
			const estimate = (estimator: 'ml' | 'reml') =>
				(fitLinearRelation(points, { method: 'ml_scatter', intrinsicScatterEstimator: estimator }).intrinsicScatter
					?.value as number) ** 2;
			mlSum += estimate('ml');
			remlSum += estimate('reml');
		}
		const total = 0.02 ** 2 + 0.2 ** 2;
		const expectedMl = ((n - 2) / n) * total - 0.02 ** 2;
		// Monte-Carlo error of either mean: total·√(2/18)/√400 ≈ 6.7e-4; the two expectations differ by 4e-3.
		console.log(
			`[intrinsic-scatter] mean σ_int²: REML ${(remlSum / samples).toFixed(5)} (truth 0.04000), ML ${(mlSum / samples).toFixed(5)} (expected ${expectedMl.toFixed(5)})`
		);
		expect(Math.abs(remlSum / samples - 0.04)).toBeLessThan(2.2e-3);
		expect(Math.abs(mlSum / samples - expectedMl)).toBeLessThan(2.2e-3);
	});

	test.skipIf(!hasAstropy())(
		'unequal errors with a metallicity term: REML σ_int maximises the restricted likelihood computed by numpy',
		() => {
			void ASTROPY_MISSING_REASON;
			const points = syntheticCalibrators(
				{ ...TRUTH, metallicityTerm: -0.2 },
				{ count: 40, seed: 99, absMagErrRange: [0.02, 0.09] }
			);
			const reml = fitLinearRelation(points, {
				method: 'ml_scatter',
				metallicityTerm: true,
				intrinsicScatterEstimator: 'reml'
			});
			// An independent evaluation: ℓ_R(s) = −½[Σ ln vᵢ + rᵀV⁻¹r + ln|XᵀV⁻¹X|] with the GLS β at
			// each s (Harville 1977), using numpy's lstsq and slogdet, maximised by golden-section search.
			const reference = runPython<{ sigma: number }>(
				`
import numpy as np
x = np.array([[1.0, p['logPeriod'] - 1.0, p['feh']] for p in data])
y = np.array([p['absMag'] for p in data])
e2 = np.array([p['absMagErr'] ** 2 for p in data])
def restricted(s):
    w = 1.0 / (e2 + s * s)
    sw = np.sqrt(w)
    beta = np.linalg.lstsq(x * sw[:, None], y * sw, rcond=None)[0]
    r = y - x @ beta
    return -0.5 * (np.sum(np.log(1.0 / w)) + np.sum(w * r * r) + np.linalg.slogdet(x.T @ (x * w[:, None]))[1])
lo, hi = 0.0, 1.0
g = (np.sqrt(5.0) - 1.0) / 2.0
for _ in range(200):
    a = hi - g * (hi - lo); b = lo + g * (hi - lo)
    if restricted(a) > restricted(b): hi = b
    else: lo = a
print(json.dumps({'sigma': (lo + hi) / 2.0}))
`,
				points
			);
			expect(reml.intrinsicScatter?.value as number).toBeCloseTo(reference.sigma, 7);
		}
	);
});

describe('bootstrap of a σ-clipped fit', () => {
	const clean = syntheticCalibrators(
		{ ...TRUTH, intrinsicScatter: 0 },
		{ count: 60, seed: 21, absMagErrRange: [0.05, 0.05] }
	);
	const withOutlier = clean.map((point, k) => (k === 3 ? { ...point, absMag: point.absMag + 3 } : point));

	test('every resample is clipped afresh: on average it rejects the outlier’s copies, about one', () => {
		// A given star appears Binomial(n, 1/n) times in a draw of n from n, mean 1 (common practice).
		const fit = fitLinearRelation(withOutlier, {
			method: 'ols',
			clipping: { sigma: 4, maxIterations: 5 },
			bootstrap: { resamples: 400, seed: 5 }
		});
		expect(fit.bootstrap?.reclipped).toBe(true);
		const mean = fit.bootstrap?.meanRejectedPerResample as number;
		// Standard error of that mean over 400 draws ≈ √(1 − 1/60)/20 ≈ 0.05; clean stars rarely pass 4σ.
		expect(mean).toBeGreaterThan(0.85);
		expect(mean).toBeLessThan(1.25);
		// Had the outlier been kept in any resample, the zero-point interval would be far wider.
		const interval = fit.bootstrap?.intervals[0] as { lower: number; upper: number };
		expect(interval.upper - interval.lower).toBeLessThan(3 * 2 * (fit.errors.zeroPoint as number));
	});

	test('without clipping nothing is re-clipped and the intervals are those of plain resampling', () => {
		const fit = fitLinearRelation(clean, { method: 'ols', bootstrap: { resamples: 200, seed: 8 } });
		expect(fit.bootstrap?.reclipped).toBe(false);
		expect(fit.bootstrap?.meanRejectedPerResample).toBeNull();
	});

	test('re-clipping widens the intervals when clipping decisions are uncertain', () => {
		// Heavy-tailed residuals: which stars a 2.5σ clip rejects changes from draw to draw. Freezing the
		// first fit's rejections (the old practice) understates the zero point's spread; the whole
		// procedure's bootstrap must not be narrower than resampling the kept stars with no clip at all.
		const tailed = clean.map((point, k) =>
			k % 9 === 0 ? { ...point, absMag: point.absMag + 0.3 * (k % 2 ? 1 : -1) } : point
		);
		const clipped = fitLinearRelation(tailed, {
			method: 'ols',
			clipping: { sigma: 2.5, maxIterations: 5 },
			bootstrap: { resamples: 400, seed: 3 }
		});
		const kept = new Set(clipped.residuals.filter((star) => star.used).map((star) => star.star));
		const frozen = fitLinearRelation(
			tailed.filter((point) => kept.has(point.star)),
			{ method: 'ols', bootstrap: { resamples: 400, seed: 3 } }
		);
		const width = (fit: typeof clipped) => {
			const interval = fit.bootstrap?.intervals[0] as { lower: number; upper: number };
			return interval.upper - interval.lower;
		};
		expect(clipped.rejected.length).toBeGreaterThan(0);
		console.log(
			`[intrinsic-scatter] zero-point 68% width: re-clipped ${width(clipped).toFixed(4)}, frozen rejections ${width(frozen).toFixed(4)}`
		);
		expect(width(clipped)).toBeGreaterThan(width(frozen));
	});
});
