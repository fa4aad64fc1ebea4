import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { uniformFloat64 } from 'pure-rand/distribution/uniformFloat64';
import { xoroshiro128plus } from 'pure-rand/generator/xoroshiro128plus';
import { applyRelation, type StarPhotometry } from './apply';
import { combineHostDistance } from './host-distance';
import { fitLinearRelation } from './fit';
import { relationFromContent, type RelationVersionContent } from './frozen-content';
import { hostDistanceBatch } from './host-batch';
import { relationBudgetRecord } from './relation-systematics';
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
		const small = hostOf(25, 1, {
			clipSigma: null,
			budget: { fixed: [{ id: 'anchor_distance', label: 'anchor', value: 0.026 }] }
		});
		const large = hostOf(400, 2, {
			clipSigma: null,
			budget: { fixed: [{ id: 'anchor_distance', label: 'anchor', value: 0.026 }] }
		});
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
		expect(() =>
			combineHostDistance(relation, stars, { budget: { fixed: [{ id: 'x', label: 'x', value: -1 }] } })
		).toThrow(CalibrationInputError);
	});
});

const ogleReason = hasReferenceData('ogle-magellanic-cepheids')
	? ''
	: ` (skipped: ${missingReason('ogle-magellanic-cepheids')})`;

/** OGLE-IV fundamental-mode Cepheids with V and I, as W_I = I − 1.55(V − I) (Soszyński et al. 2015, AcA 65, 297). */
function ogleWesenheit(file: string): { id: string; logPeriod: number; w: number }[] {
	return readReferenceFile('ogle-magellanic-cepheids', file)
		.trim()
		.split('\n')
		.map((line) => line.split(','))
		.filter((f) => f[1] === 'F' && Number(f[4]) > 0 && Number(f[5]) > 0)
		.map((f) => ({
			id: f[0],
			logPeriod: Math.log10(Number(f[7])),
			w: Number(f[4]) - 1.55 * (Number(f[5]) - Number(f[4]))
		}));
}

/** μ_LMC = 18.477 ± 0.026 (Pietrzyński et al. 2019, Nature 567, 200, from memory). */
const MU_LMC = 18.477;
const MU_LMC_ERR = 0.026;

describe.skipIf(!hasReferenceData('ogle-magellanic-cepheids'))(
	`OGLE-IV Magellanic Cepheids: a relation fitted on half the LMC, applied to the other half and to the SMC${ogleReason}`,
	() => {
		let started = 0;
		beforeAll(() => {
			started = performance.now();
		});
		afterAll(() => console.info(`OGLE host tests: ${(performance.now() - started).toFixed(0)} ms`));
		const lmc = hasReferenceData('ogle-magellanic-cepheids') ? ogleWesenheit('lmccephdata.csv') : [];
		// Random halves from a seeded generator: the host never shares a star with the relation.
		const rng = xoroshiro128plus(14);
		const inFitHalf = lmc.map(() => uniformFloat64(rng) < 0.5);
		const fitHalf = lmc.filter((_, i) => inFitHalf[i]);
		const hostHalf = lmc.filter((_, i) => !inFitHalf[i]);

		const fit = fitLinearRelation(
			fitHalf.map((s) => ({ star: s.id, logPeriod: s.logPeriod, absMag: s.w - MU_LMC, absMagErr: 0.02 })),
			{ method: 'ols', clipping: { sigma: 3, maxIterations: 10 } }
		);
		/** The frozen content of such a version, to the contract of engine 2.0.0 (anchor term: ∂a/∂μ_LMC = −1). */
		const content = {
			ref: 'ogle-lmc-half-w-i@1',
			band: 'W_VI',
			population: 'classical_fundamental',
			magnitude_system: 'Vega',
			coefficients: { zero_point: fit.coefficients.zeroPoint, slope: fit.coefficients.slope, metallicity_term: null },
			pivot_log_period: 1,
			pivot_feh: 0,
			covariance: { axes: fit.covariance.axes, matrix: fit.covariance.matrix },
			intrinsic_scatter: fit.residualSd,
			validity: { log_period_min: 0.3, log_period_max: 1.8, feh_min: null, feh_max: null },
			fit: { extinction_law: null, r_v: null },
			engine_version: '2.0.0',
			systematics: {
				terms: [
					{
						id: 'anchor_distance',
						label: `LMC μ = ${MU_LMC} ± ${MU_LMC_ERR}`,
						value: MU_LMC,
						error: MU_LMC_ERR,
						effect: { zero_point: -MU_LMC_ERR, slope: 0, metallicity_term: null }
					}
				]
			},
			fit_quality: {
				reduced_chi_square: fit.reducedChiSquare,
				degrees_of_freedom: fit.degreesOfFreedom,
				covariance_scaled: false,
				errors_too_small: false
			},
			wesenheit_ratio: 1.55
		};
		const relationOfHalf = relationFromContent(content as unknown as RelationVersionContent);
		const record = relationBudgetRecord(content);
		const hostOf = (stars: { id: string; logPeriod: number; w: number }[]) =>
			hostDistanceBatch(
				relationOfHalf,
				{
					ids: stars.map((s) => s.id),
					periodDays: Float64Array.from(stars, (s) => 10 ** s.logPeriod),
					mag: Float64Array.from(stars, (s) => s.w),
					magErr: new Float64Array(stars.length).fill(0.02)
				},
				{ clipSigma: 3, relationTerms: record.terms }
			).combined;

		test('the half refit agrees with OGLE-III W_I = −3.314 log P + 15.892 (Soszyński et al. 2008, AcA 58, 163, from memory)', () => {
			expect(fitHalf.length).toBeGreaterThan(1000);
			expect(hostHalf.length).toBeGreaterThan(1000);
			expect(Math.abs(fit.coefficients.slope + 3.314)).toBeLessThan(0.03);
			expect(Math.abs(fit.coefficients.zeroPoint + MU_LMC - (15.892 - 3.314))).toBeLessThan(0.02);
		});

		test('applied to the other half: μ = 18.477 back, and σ_sys = √(0.026² + gᵀΣg) to 1e-6 — the anchor counted exactly once', () => {
			const host = hostOf(hostHalf);
			const dx = host.meanLogPeriod - 1;
			const [[s00, s01], [, s11]] = fit.covariance.matrix;
			const gSg = s00 + 2 * dx * s01 + dx * dx * s11;
			expect(Math.abs(host.mu0.systematic - Math.sqrt(MU_LMC_ERR ** 2 + gSg))).toBeLessThan(1e-6);
			expect(host.errorBudget.map((t) => t.id)).toEqual(['relation_coefficients', 'anchor_distance']);
			expect(host.mu0.systematic).toBeGreaterThan(MU_LMC_ERR);
			// Same galaxy, other stars: the anchor returns within the two halves' statistical errors.
			expect(Math.abs(host.mu0.value - MU_LMC)).toBeLessThan(3 * Math.hypot(host.mu0.statistical, Math.sqrt(gSg)));
		});

		test('the SMC: μ_SMC − μ_LMC = 0.500 (Graczyk et al. 2020, ApJ 904, 13, from memory) to 0.05 mag, only for log P > 0.4', () => {
			// The clouds' W_I slopes differ (the SMC's short-period Cepheids are relatively brighter, and its
			// depth along the line of sight is larger), so the offset from one relation holds only over the
			// periods both share well: log P > 0.4, and then only to about 0.05 mag.
			const smc = ogleWesenheit('smccephdata.csv');
			const longer = hostOf(smc.filter((s) => s.logPeriod > 0.4));
			const all = hostOf(smc);
			console.info(
				`SMC − LMC: ${(longer.mu0.value - MU_LMC).toFixed(3)} mag for log P > 0.4 (${longer.nUsed} stars), ${(all.mu0.value - MU_LMC).toFixed(3)} for all periods (${all.nUsed})`
			);
			expect(Math.abs(longer.mu0.value - MU_LMC - 0.5)).toBeLessThan(0.05);
			// With the short periods in, the slope difference pulls the offset beyond that tolerance.
			expect(Math.abs(all.mu0.value - MU_LMC - 0.5)).toBeGreaterThan(0.05);
		});
	}
);
