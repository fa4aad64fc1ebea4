import { Matrix } from 'ml-matrix';
import { describe, expect, test } from 'vitest';
import { compareRelations, predictWithError, rationaleDiff, type ComparableRelation } from './comparison';

const base: ComparableRelation & { rationale: string } = {
	band: 'W_VI',
	population: 'classical_fundamental',
	magnitude_system: 'Vega',
	form: 'period_luminosity',
	coefficients: { zero_point: -5.9, slope: -3.3, metallicity_term: null },
	pivot_log_period: 1,
	pivot_feh: 0,
	covariance: {
		axes: ['zero_point', 'slope'],
		matrix: [
			[0.0004, 0.0001],
			[0.0001, 0.0025]
		]
	},
	intrinsic_scatter: 0.08,
	n_used: 40,
	validity: { log_period_min: 0.4, log_period_max: 1.7, feh_min: null, feh_max: null },
	fit: {
		method: 'wls',
		anchor: 'parallax',
		weighted_covariance: 'absolute',
		fixed_slope: null,
		fixed_zero_point: null,
		clipping: { sigma: 3, max_iterations: 10 },
		extinction_law: null,
		r_v: null,
		parallax_offset: { mode: 'given', value: -0.017, error: 0.005 },
		bootstrap: null,
		population: 'classical_fundamental',
		period_filter: { log_period_min: null, log_period_max: null },
		fundamentalised: false,
		assumed_intrinsic_scatter: null
	},
	calibrator_set: { slug: 'invented-set', revision: 1, digest: `sha256:${'1'.repeat(64)}` },
	rationale: 'First calibration from the invented survey.'
};

const proposed: ComparableRelation & { rationale: string } = {
	...base,
	coefficients: { zero_point: -5.95, slope: -3.25, metallicity_term: null },
	covariance: {
		axes: ['zero_point', 'slope'],
		matrix: [
			[0.0009, 0],
			[0, 0.0016]
		]
	},
	fit: { ...base.fit, clipping: { sigma: 2.5, max_iterations: 10 } },
	calibrator_set: { ...base.calibrator_set, revision: 2 },
	rationale: 'Second calibration from the invented survey.'
};

describe('relation comparison', () => {
	test('coefficients side by side with Δ and Δ/σ (errors combined in quadrature)', () => {
		const comparison = compareRelations(base, proposed);
		const zeroPoint = comparison.coefficients.find((c) => c.name === 'zero_point')!;
		expect(zeroPoint.delta).toBeCloseTo(-0.05, 12);
		expect(zeroPoint.deltaOverSigma).toBeCloseTo(-0.05 / Math.hypot(0.02, 0.03), 12);
		const gamma = comparison.coefficients.find((c) => c.name === 'metallicity_term')!;
		expect(gamma).toMatchObject({ base: null, proposed: null, delta: null, deltaOverSigma: null });
	});

	test('settings that changed are listed by path, and only those', () => {
		expect(compareRelations(base, proposed).settings).toEqual([
			{ path: 'calibrator_set.revision', base: 1, proposed: 2 },
			{ path: 'fit.clipping.sigma', base: 3, proposed: 2.5 }
		]);
	});

	test('the predicted M and its error at log P = 0.5, 1, 1.5 agree with gᵀΣg computed by ml-matrix', () => {
		const comparison = compareRelations(base, proposed);
		expect(comparison.predictions.map((p) => p.logPeriod)).toEqual([0.5, 1, 1.5]);
		for (const prediction of comparison.predictions) {
			const g = new Matrix([[1, prediction.logPeriod - 1]]);
			const expected = Math.sqrt(g.mmul(new Matrix(base.covariance.matrix)).mmul(g.transpose()).get(0, 0));
			expect(prediction.baseError).toBeCloseTo(expected, 14);
			expect(prediction.delta).toBeCloseTo(prediction.proposed - prediction.base, 14);
		}
		// At the pivot the prediction is the zero point and its error σ_a.
		expect(predictWithError(base, 1, 0)).toEqual({ value: -5.9, error: 0.02 });
	});

	test('a first version compares against nothing', () => {
		const comparison = compareRelations(null, proposed);
		expect(comparison.predictions).toEqual([]);
		expect(comparison.coefficients[0]).toMatchObject({ base: null, delta: null });
		expect(comparison.rationale).toEqual([{ kind: 'added', text: proposed.rationale }]);
	});

	test('the rationale diff marks the changed words and reassembles both texts', () => {
		const parts = rationaleDiff('First calibration.', 'Second calibration.');
		expect(parts).toContainEqual({ kind: 'removed', text: 'First' });
		expect(parts).toContainEqual({ kind: 'added', text: 'Second' });
		const before = parts
			.filter((p) => p.kind !== 'added')
			.map((p) => p.text)
			.join('');
		const after = parts
			.filter((p) => p.kind !== 'removed')
			.map((p) => p.text)
			.join('');
		expect([before, after]).toEqual(['First calibration.', 'Second calibration.']);
	});
});
