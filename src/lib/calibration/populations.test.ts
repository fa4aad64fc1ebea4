import { describe, expect, test } from 'vitest';
import fc from 'fast-check';
import {
	FIRST_OVERTONE_PERIOD_RATIO,
	firstOvertonePeriod,
	fundamentalisePeriod,
	getPopulation,
	isPopulationId,
	mixedPopulationWarning,
	periodWarnings,
	POPULATIONS,
	validityWarnings
} from './populations';
import { CalibrationInputError, POPULATION_IDS } from './types';

/** P1/P0 = 0.720 − 0.027·log10 P0 (Alcock et al. 1995, as adopted by Feast & Catchpole 1997; from memory). */
const implicitResidual = (p1: number, p0: number) => p1 / p0 - (0.72 - 0.027 * Math.log10(p0));

describe('population catalogue', () => {
	test('covers every population id with a label and a period range', () => {
		expect(Object.keys(POPULATIONS).sort()).toEqual([...POPULATION_IDS].sort());
		for (const id of POPULATION_IDS) {
			const info = getPopulation(id);
			expect(info.label.length).toBeGreaterThan(0);
			expect(info.typicalPeriodDays.min).toBeLessThan(info.typicalPeriodDays.max);
		}
		// Classical fundamental-mode Cepheids: ~1–100 d (common practice).
		expect(POPULATIONS.classical_fundamental.typicalPeriodDays).toEqual({ min: 1, max: 100 });
		expect(isPopulationId('classical_first_overtone')).toBe(true);
		expect(isPopulationId('rr_lyrae')).toBe(false);
	});
});

describe('fundamentalisation of first-overtone periods', () => {
	test('P1 = 3 d gives P0 ≈ 4.27 d, satisfying the implicit equation to 1e-10', () => {
		// Alcock et al. 1995 / Feast & Catchpole 1997 (from memory): P0 = P1/(0.720 − 0.027 log P0).
		const { periodDays: p0, iterations } = fundamentalisePeriod(3);
		expect(Math.abs(implicitResidual(3, p0))).toBeLessThan(1e-10);
		expect(p0).toBeGreaterThan(4.1);
		expect(p0).toBeLessThan(4.4);
		expect(iterations).toBeLessThan(20);
	});

	test('round trip P1 → P0 → P1 and the implicit equation hold over the first-overtone range', () => {
		// Property test over 0.25–7 d (first-overtone classical Cepheids, common practice).
		fc.assert(
			fc.property(fc.double({ min: 0.25, max: 7, noNaN: true }), (p1) => {
				const { periodDays: p0 } = fundamentalisePeriod(p1);
				expect(Math.abs(implicitResidual(p1, p0))).toBeLessThan(1e-10);
				expect(Math.abs(firstOvertonePeriod(p0) / p1 - 1)).toBeLessThan(1e-12);
				expect(p0).toBeGreaterThan(p1);
			})
		);
	});

	test('propagates the period error by implicit differentiation', () => {
		// Finite difference of the solution (common practice) vs dP0 = dP1/(r + c1/ln 10).
		const p1 = 2.5;
		const sigma = 1e-3;
		const analytic = fundamentalisePeriod(p1, sigma).periodErrDays as number;
		const h = 1e-6;
		const numeric =
			((fundamentalisePeriod(p1 + h).periodDays - fundamentalisePeriod(p1 - h).periodDays) / (2 * h)) * sigma;
		expect(Math.abs(analytic / numeric - 1)).toBeLessThan(1e-6);
		expect(FIRST_OVERTONE_PERIOD_RATIO).toEqual({ intercept: 0.72, logSlope: -0.027 });
	});

	test('refuses a non-positive or NaN period naming the star', () => {
		expect(() => fundamentalisePeriod(-1, null, undefined, 'FO-1')).toThrow(CalibrationInputError);
		expect(() => fundamentalisePeriod(Number.NaN, null, undefined, 'FO-2')).toThrow(/FO-2: periodDays/);
	});
});

describe('period warnings', () => {
	const codes = (warnings: { code: string }[]) => warnings.map((w) => w.code);

	test('0.5 d is RR Lyrae range for a fundamental-mode classical Cepheid, not for a first overtone', () => {
		// Common practice: fundamental-mode pulsators below ~1 d are RR Lyrae; first-overtone classical
		// Cepheids reach ~0.25 d.
		expect(codes(periodWarnings('short-F', 'classical_fundamental', 0.5))).toEqual(['period_below_rr_lyrae_limit']);
		expect(periodWarnings('short-1O', 'classical_first_overtone', 0.5)).toEqual([]);
		expect(codes(periodWarnings('tiny-1O', 'classical_first_overtone', 0.2))).toEqual(['period_below_rr_lyrae_limit']);
		expect(periodWarnings('ordinary', 'classical_fundamental', 10)).toEqual([]);
	});

	test('150 d is flagged as a long-period variable', () => {
		// Common practice: far above ~100 d a Mira-type variable.
		const [warning] = periodWarnings('slow', 'classical_fundamental', 150);
		expect(warning).toMatchObject({ code: 'period_long_period_variable', star: 'slow', field: 'periodDays' });
		expect(warning.details).toMatchObject({ periodDays: 150, limitDays: 100 });
		expect(periodWarnings('just-below', 'classical_fundamental', 99)).toEqual([]);
	});

	test('outside_validity_range in log P and [Fe/H]', () => {
		const validity = { logPeriodMin: 0.4, logPeriodMax: 1.5, fehMin: -0.5, fehMax: 0.3 };
		expect(validityWarnings('in', 1, 0, validity)).toEqual([]);
		expect(codes(validityWarnings('long', 1.7, 0, validity))).toEqual(['outside_validity_range']);
		const [metal] = validityWarnings('poor', 1, -1.2, validity);
		expect(metal).toMatchObject({ code: 'outside_validity_range', field: 'feh', star: 'poor' });
		expect(validityWarnings('open', 1, -3, { ...validity, fehMin: null, fehMax: null })).toEqual([]);
	});

	test('a mixture of populations is flagged with counts; one population is not', () => {
		expect(mixedPopulationWarning(['classical_fundamental', 'classical_fundamental'])).toBeNull();
		const warning = mixedPopulationWarning([
			'classical_fundamental',
			'type2_w_vir',
			'classical_fundamental',
			'classical_first_overtone'
		]);
		expect(warning?.code).toBe('mixed_populations');
		expect(warning?.details).toEqual({ classical_fundamental: 2, classical_first_overtone: 1, type2_w_vir: 1 });
	});
});
