import { afterAll, describe, expect, test } from 'vitest';
import { createGaussianStream } from './fit';
import { bandExtinctionPerEbv } from './extinction';
import { hostDistanceBatch, type HostBatchInput, type HostSharedInputs } from './host-batch';
import { relationBudgetRecord } from './relation-systematics';
import { INVENTED_V_BAND } from '../../../tests/fixtures/invented-v-band';

/**
 * An invented V-band relation with a metallicity term, frozen to the engine-2 content contract with three
 * relation systematics, applied to an invented host whose stars share every host-level term.
 */
const relation = INVENTED_V_BAND;

/** The budget keys as engine 2.0.0 freezes them: effect = ∂θ/∂term × error. */
const frozenBudgetKeys = {
	systematics: {
		terms: [
			{
				id: 'anchor_distance',
				label: 'anchor μ = 18.477 ± 0.026',
				value: 18.477,
				error: 0.026,
				effect: { zero_point: -0.026, slope: 0, metallicity_term: 0 }
			},
			{
				id: 'parallax_zero_point',
				label: 'parallax zero point −0.017 ± 0.005 mas',
				value: -0.017,
				error: 0.005,
				effect: { zero_point: 0.011, slope: -0.004, metallicity_term: 0.002 }
			},
			{
				id: 'fixed_slope',
				label: 'fixed slope ± 0.02',
				value: -2.67,
				error: 0.02,
				effect: { zero_point: 0.003, slope: 0.02, metallicity_term: null }
			}
		]
	},
	fit_quality: { reduced_chi_square: 1.1, degrees_of_freedom: 40, covariance_scaled: false, errors_too_small: false },
	wesenheit_ratio: null
};

const shared: HostSharedInputs = {
	foregroundEbvError: 0.02,
	metallicity: { value: -0.3, error: 0.15, scale: 'feh' },
	slopeError: 0.05,
	crowding: { correction: 0.03, error: 0.025 }
};

const TRUE_MU = 29.5;
const MAG_ERR = 0.1;

/** Invented host: log P uniform-ish in [0.8, 1.6], no star with its own [Fe/H], E(B−V) = 0.1 exactly. */
function inventedHost(n: number): HostBatchInput {
	const gauss = createGaussianStream(20261206 + n);
	const logP = Float64Array.from({ length: n }, (_, i) => 0.8 + 0.8 * ((i * 0.6180339887) % 1));
	const ratio = bandExtinctionPerEbv('ccm89', 'V', 3.1);
	const m = (x: number) => -3.944 - 2.67 * (x - 1) - 0.2 * (-0.3 - 0);
	return {
		ids: Array.from({ length: n }, (_, i) => `inv-${i}`),
		periodDays: logP.map((x) => 10 ** x),
		// The crowding correction (+0.03) is what the stars were measured too bright by.
		mag: logP.map((x) => TRUE_MU + m(x) + ratio * 0.1 - 0.03 + Math.hypot(MAG_ERR, 0.21) * gauss()),
		magErr: new Float64Array(n).fill(MAG_ERR),
		ebv: new Float64Array(n).fill(0.1),
		ebvErr: new Float64Array(n).fill(0)
	};
}

/** σ_sys by hand: each injected term at the host's g = (1, ⟨log P⟩ − 1, −0.3 − 0). */
function expectedSystematic(meanLogP: number): { terms: [string, number][]; total: number } {
	const g = [1, meanLogP - 1, -0.3];
	const sigma = relation.covariance.matrix;
	let gSg = 0;
	for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) gSg += g[i] * sigma[i][j] * g[j];
	const dot = (e: { zero_point: number; slope: number; metallicity_term: number | null }) =>
		Math.abs(e.zero_point + g[1] * e.slope + g[2] * (e.metallicity_term ?? 0));
	const terms: [string, number][] = [
		['relation_coefficients', Math.sqrt(gSg)],
		...frozenBudgetKeys.systematics.terms.map((t): [string, number] => [t.id, dot(t.effect)]),
		['foreground_reddening', bandExtinctionPerEbv('ccm89', 'V', 3.1) * 0.02],
		['host_metallicity', 0.2 * 0.15],
		['adopted_slope', Math.abs(g[1]) * 0.05],
		['crowding', 0.025]
	];
	return { terms, total: Math.sqrt(terms.reduce((sum, [, v]) => sum + v * v, 0)) };
}

const started = performance.now();
afterAll(() => console.info(`host error budget tests: ${(performance.now() - started).toFixed(0)} ms`));

describe('an invented host’s shared terms count once, whatever N (synthetic, invented data)', () => {
	const record = relationBudgetRecord(frozenBudgetKeys);
	const perStar = Math.hypot(MAG_ERR, 0.21);

	test.each([10, 100, 1000, 10_000])(
		'N = %i: σ_sys is the quadrature sum of the injected terms to 1e-9; σ_stat = σ_i/√N',
		(n) => {
			const batch = hostDistanceBatch(relation, inventedHost(n), {
				clipSigma: null,
				relationTerms: record.terms,
				shared
			});
			const c = batch.combined;
			const expected = expectedSystematic(c.meanLogPeriod);
			expect(c.errorBudget.map((t) => t.id)).toEqual(expected.terms.map(([id]) => id));
			c.errorBudget.forEach((term, i) => expect(Math.abs(term.value - expected.terms[i][1])).toBeLessThan(1e-12));
			expect(Math.abs(c.mu0.systematic - expected.total)).toBeLessThan(1e-9);
			// Every star has the same random error, so 1/√Σw = σ_i/√N exactly.
			expect(c.mu0.statistical * Math.sqrt(n)).toBeCloseTo(perStar, 12);
			expect(c.assumedMetallicityCount).toBe(n);
			expect(Math.abs(c.mu0.value - TRUE_MU)).toBeLessThan(5 * c.mu0.statistical);
			expect(c.mu0.total).toBeCloseTo(Math.hypot(c.mu0.statistical, c.mu0.systematic), 14);
		}
	);

	test('σ_sys does not fall with N while σ_stat does; the budget compared with Riess et al. 2016', () => {
		const budgets = [10, 10_000].map(
			(n) =>
				hostDistanceBatch(relation, inventedHost(n), { clipSigma: null, relationTerms: record.terms, shared }).combined
		);
		expect(budgets[1].mu0.statistical / budgets[0].mu0.statistical).toBeCloseTo(Math.sqrt(10 / 10_000), 12);
		// Both hosts share σ_sys up to the change of ⟨log P⟩ with the sample (< 0.002 mag here).
		expect(Math.abs(budgets[1].mu0.systematic - budgets[0].mu0.systematic)).toBeLessThan(0.002);
		expect(budgets[1].mu0.systematic).toBeGreaterThan(20 * budgets[1].mu0.statistical);
		/*
		 * Riess et al. 2016 (ApJ 826, 56), Table 7, H0 error budget — lines from memory, as we recall them:
		 *   anchor distance (NGC 4258 masers, MW parallaxes, LMC eclipsing binaries)  → Candlebook: anchor_distance
		 *   mean of the Cepheid PL in the anchor(s)                                 → relation_coefficients (+ parallax_zero_point)
		 *   mean of the Cepheid PL in the SN hosts (statistical, incl. crowding)    → σ_stat and crowding
		 *   Cepheid reddening, metallicity, PL slope/break choices (analysis variants) → foreground_reddening, host_metallicity,
		 *                                                                              metallicity_scale, adopted_slope, fixed_slope
		 *   SN Ia mean in the calibrator hosts; Hubble-flow SN Ia intercept a_B     → left to the user (Candlebook has no SN Ia step)
		 *   peculiar velocities of the Hubble-flow sample                           → one galaxy only: peculiar_velocity in H0's budget
		 */
		console.table([
			{ riess2016: 'anchor distance', candlebook: 'anchor_distance (relation, frozen)' },
			{ riess2016: 'PL mean in anchor', candlebook: 'relation_coefficients, parallax_zero_point' },
			{ riess2016: 'PL mean in SN hosts', candlebook: 'σ_stat; crowding (host input)' },
			{
				riess2016: 'reddening / metallicity / PL slope',
				candlebook: 'foreground_reddening, host_metallicity, metallicity_scale, adopted_slope, fixed_slope'
			},
			{ riess2016: 'SN Ia mean in hosts; a_B', candlebook: 'left to the user (no SN Ia step)' },
			{ riess2016: 'peculiar velocities', candlebook: "H0's peculiar_velocity term" }
		]);
		console.table(budgets[1].errorBudget.map((t) => ({ id: t.id, mag: t.value.toFixed(5) })));
	});

	test('an old version (no budget keys) records nothing; a malformed one is refused with the field named', () => {
		expect(relationBudgetRecord({ ref: 'x@1' })).toEqual({
			recorded: false,
			terms: [],
			fitQuality: null,
			wesenheitRatio: null
		});
		expect(() => relationBudgetRecord({ systematics: { terms: [{ id: 'anchor_distance', error: -1 }] } })).toThrow(
			/systematics\.terms\.0/
		);
	});

	test('[O/H] is taken as [Fe/H] with the assumption stated, and its conversion error is its own term', () => {
		const batch = hostDistanceBatch(relation, inventedHost(50), {
			clipSigma: null,
			shared: { metallicity: { value: -0.3, error: 0.1, scale: 'o_h', conversionError: 0.08 } }
		});
		expect(batch.warnings.find((w) => w.code === 'metallicity_scale_assumed')?.message).toContain('[Fe/H] = [O/H]');
		const term = (id: string) => batch.combined.errorBudget.find((t) => t.id === id)?.value;
		expect(term('host_metallicity')).toBeCloseTo(0.2 * 0.1, 14);
		expect(term('metallicity_scale')).toBeCloseTo(0.2 * 0.08, 14);
		expect(batch.warnings.find((w) => w.code === 'metallicity_assumed')?.details?.count).toBe(50);
	});
});
