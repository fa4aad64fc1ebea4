import { describe, expect, test } from 'vitest';
import { uniformFloat64 } from 'pure-rand/distribution/uniformFloat64';
import { xoroshiro128plus } from 'pure-rand/generator/xoroshiro128plus';
import { applyRelation, type StarPhotometry } from './apply';
import { combineHostDistance } from './host-distance';
import { CalibrationInputError, type Relation } from './types';
import { hasReferenceData, missingReason, readReferenceFile } from '../../../tests/support/reference-data';

const relation: Relation = {
	bandId: 'W_VI',
	population: 'classical_fundamental',
	magnitudeSystem: 'Vega',
	coefficients: { zeroPoint: -5.9, slope: -3.3, metallicityTerm: null },
	pivotLogPeriod: 1,
	pivotFeh: 0,
	covariance: {
		axes: ['zero_point', 'slope'],
		matrix: [
			[0.02 ** 2, 0],
			[0, 0.05 ** 2]
		]
	},
	intrinsicScatter: 0.08,
	validity: { logPeriodMin: 0.3, logPeriodMax: 2, fehMin: null, fehMax: null },
	extinctionLaw: null,
	rV: null
};

/** Invented host at μ = 29.5: Gaussian noise from a seeded generator (Box–Muller). */
function syntheticHost(n: number, seed: number, trueMu = 29.5): StarPhotometry[] {
	const rng = xoroshiro128plus(seed);
	const uniform = () => 1 - uniformFloat64(rng); // (0, 1], safe for log
	const gauss = () => Math.sqrt(-2 * Math.log(uniform())) * Math.cos(2 * Math.PI * uniform());
	return Array.from({ length: n }, (_, i) => {
		const logP = 0.8 + 0.8 * uniform();
		const magErr = 0.1;
		const noise = Math.hypot(magErr, relation.intrinsicScatter) * gauss();
		return {
			id: `h${i}`,
			periodDays: 10 ** logP,
			mag: trueMu - 5.9 - 3.3 * (logP - 1) + noise,
			magErr
		};
	});
}

function hostOf(n: number, seed: number, options = {}) {
	return combineHostDistance(relation, applyRelation(relation, syntheticHost(n, seed)).stars, options);
}

describe('host-galaxy distance', () => {
	test('statistical error shrinks as 1/√N; the systematic does not (inverse-variance mean; PRODUCT.md)', () => {
		const small = hostOf(25, 1, { clipSigma: null, budget: { fixed: [{ id: 'anchor_distance', label: 'anchor', value: 0.026 }] } });
		const large = hostOf(400, 2, { clipSigma: null, budget: { fixed: [{ id: 'anchor_distance', label: 'anchor', value: 0.026 }] } });
		const perStar = Math.hypot(0.1, 0.08);
		expect(small.mu0.statistical).toBeCloseTo(perStar / 5, 12);
		expect(large.mu0.statistical).toBeCloseTo(perStar / 20, 12);
		expect(small.mu0.statistical / large.mu0.statistical).toBeCloseTo(4, 10);
		// systematic: zero point ⊕ slope at the mean log P ⊕ anchor — the same for both, never averaged down
		expect(small.mu0.systematic).toBeGreaterThan(Math.hypot(0.02, 0.026) - 1e-12);
		expect(large.mu0.systematic).toBeGreaterThan(Math.hypot(0.02, 0.026) - 1e-12);
		expect(Math.abs(small.mu0.systematic - large.mu0.systematic)).toBeLessThan(0.003);
		expect(large.mu0.total).toBeCloseTo(Math.hypot(large.mu0.statistical, large.mu0.systematic), 14);
		expect(large.mu0.total).toBeGreaterThan(large.mu0.systematic);
		expect(Math.abs(large.mu0.value - 29.5)).toBeLessThan(4 * large.mu0.statistical);
	});

	test('the coefficient term is evaluated once at the host’s weighted mean log P: √(σ_a² + Δ²σ_b²)', () => {
		const host = hostOf(60, 3, { clipSigma: null });
		const dLogP = host.meanLogPeriod - 1;
		expect(host.errorBudget[0]).toMatchObject({ id: 'relation_coefficients', value: expect.any(Number) });
		expect(host.errorBudget[0].value).toBeCloseTo(Math.hypot(0.02, dLogP * 0.05), 14);
		expect(host.mu0.systematic).toBeCloseTo(host.errorBudget[0].value, 14);
	});

	test('σ-clipping rejects an injected 1.5 mag outlier and records its standardized residual', () => {
		const stars = applyRelation(relation, syntheticHost(50, 4)).stars;
		stars[7] = { ...stars[7], mu0: { ...stars[7].mu0, value: stars[7].mu0.value + 1.5 } };
		const host = combineHostDistance(relation, stars, { clipSigma: 3 });
		expect(host.rejected.map((r) => r.star)).toContain('h7');
		const outlier = host.rejected.find((r) => r.star === 'h7')!;
		expect(outlier.reason).toBe('sigma_clip');
		expect(outlier.standardizedResidual).toBeGreaterThan(3);
		expect(outlier.standardizedResidual).toBeCloseTo((stars[7].mu0.value - host.mu0.value) / Math.hypot(0.1, 0.08), 12);
		expect(host.nUsed + host.rejected.length).toBe(50);
		// the clipped result is the plain weighted mean of the kept stars
		const rejectedIds = new Set(host.rejected.map((r) => r.star));
		const kept = combineHostDistance(
			relation,
			stars.filter((s) => !rejectedIds.has(s.id)),
			{ clipSigma: null }
		);
		expect(host.mu0.value).toBeCloseTo(kept.mu0.value, 14);
		expect(host.mu0.statistical).toBeCloseTo(kept.mu0.statistical, 14);
		const unclipped = combineHostDistance(relation, stars, { clipSigma: null });
		expect(unclipped.mu0.value - host.mu0.value).toBeGreaterThan(0.01); // the outlier pulls an unclipped mean by ≈ 1.5/50
		// reduced χ² of well-described errors is near 1 (common practice): 50 stars, within ±0.6
		expect(host.reducedChiSquare!).toBeGreaterThan(0.4);
		expect(host.reducedChiSquare!).toBeLessThan(1.6);
	});

	test('no stars, or a negative systematic, are refused', () => {
		expect(() => combineHostDistance(relation, [])).toThrow(CalibrationInputError);
		const stars = applyRelation(relation, syntheticHost(5, 5)).stars;
		expect(() => combineHostDistance(relation, stars, { budget: { fixed: [{ id: 'x', label: 'x', value: -1 }] } })).toThrow(
			CalibrationInputError
		);
	});
});

const ogleReason = hasReferenceData('ogle-magellanic-cepheids')
	? ''
	: ` (skipped: ${missingReason('ogle-magellanic-cepheids')})`;
describe.skipIf(!hasReferenceData('ogle-magellanic-cepheids'))(
	`OGLE-IV LMC fundamental-mode Cepheids${ogleReason}`,
	() => {
		test('the OGLE-III W_I relation made absolute with μ_LMC = 18.477 returns μ_LMC from the OGLE-IV stars to 0.02 mag', () => {
			// W_I = I − 1.55(V − I) = −3.314 log P + 15.892 (Soszyński et al. 2008, AcA 58, 163, from memory);
			// μ_LMC = 18.477 (Pietrzyński et al. 2019, Nature 567, 200, from memory). Data: Soszyński et al. 2015, AcA 65, 297.
			const absolute: Relation = {
				...relation,
				coefficients: { zeroPoint: 15.892 - 3.314 - 18.477, slope: -3.314, metallicityTerm: null },
				intrinsicScatter: 0.08
			};
			const stars = readReferenceFile('ogle-magellanic-cepheids', 'lmccephdata.csv')
				.trim()
				.split('\n')
				.map((line) => line.split(','))
				.filter((f) => f[1] === 'F' && Number(f[4]) > 0 && Number(f[5]) > 0)
				.map((f) => ({
					id: f[0],
					periodDays: Number(f[7]),
					mag: Number(f[4]) - 1.55 * (Number(f[5]) - Number(f[4])),
					magErr: 0.02
				}));
			expect(stars.length).toBeGreaterThan(2000);
			const host = combineHostDistance(absolute, applyRelation(absolute, stars).stars, { clipSigma: 3 });
			expect(Math.abs(host.mu0.value - 18.477)).toBeLessThan(0.02);
			expect(host.rejected.length).toBeGreaterThan(0);
			expect(host.rejected.length / stars.length).toBeLessThan(0.1);
		});
	}
);
