import { describe, expect, test } from 'vitest';
import { prepareCalibrators, type CalibratorRow } from './calibrators';
import { bandExtinctionPerEbv } from './extinction';
import { fundamentalisePeriod } from './populations';
import { CalibrationInputError, type InputIssue } from './types';
import { hasReferenceData, missingReason, readReferenceFile } from '../../../tests/support/reference-data';

const FIVE_OVER_LN10 = 5 / Math.LN10;

/** Invented calibrators for bookkeeping checks. */
function row(overrides: Partial<CalibratorRow> & { star: string }): CalibratorRow {
	return {
		population: 'classical_fundamental',
		periodDays: 10,
		mags: { V: { value: 8, error: 0.02 }, Ic: { value: 7, error: 0.02 } },
		parallaxMas: 0.5,
		parallaxErrMas: 0.02,
		ebv: 0.3,
		ebvErr: 0.03,
		...overrides
	};
}

function issuesOf(run: () => unknown): InputIssue[] {
	try {
		run();
	} catch (error) {
		if (error instanceof CalibrationInputError) return error.issues;
		throw error;
	}
	throw new Error('expected a CalibrationInputError');
}

describe('single band, parallax anchor', () => {
	test('M = m − A − μ with A from the law, per-star errors only, the zero point as a systematic', () => {
		const zp = { value: -0.017, error: 0.005 };
		const prepared = prepareCalibrators([row({ star: 'A' })], {
			bandId: 'V',
			anchor: 'parallax',
			parallaxZeroPoint: zp,
			extinctionLaw: 'ccm89',
			rV: 3.1
		});
		const [star] = prepared.stars;
		const perEbv = bandExtinctionPerEbv('ccm89', 'V', 3.1);
		// R_V ≡ A_V/E(B−V), and CCM89 is normalised at V: A_V/E(B−V) ≈ 3.1 (common practice; 1 % allows
		// for V's effective wavelength differing from the law's 0.549 µm normalisation).
		expect(Math.abs(perEbv / 3.1 - 1)).toBeLessThan(0.01);
		const parallax = 0.5 - zp.value;
		const mu = 10 - 5 * Math.log10(parallax);
		expect(star.extinction).toBeCloseTo(perEbv * 0.3, 12);
		expect(star.absMag).toBeCloseTo(8 - perEbv * 0.3 - mu, 12);
		const muErr = (FIVE_OVER_LN10 * 0.02) / parallax;
		expect(star.absMagErr).toBeCloseTo(Math.sqrt(0.02 ** 2 + (perEbv * 0.03) ** 2 + muErr ** 2), 12);
		expect(star.distanceSystematicErr).toBeCloseTo((FIVE_OVER_LN10 * 0.005) / parallax, 12);
		expect(prepared.systematics).toEqual([
			{ kind: 'parallax_zero_point', host: null, value: -0.017, error: 0.005, stars: ['A'] }
		]);
		expect(prepared.points).toEqual([
			{
				star: 'A',
				logPeriod: 1,
				absMag: star.absMag,
				absMagErr: star.absMagErr,
				logPeriodErr: null,
				feh: null,
				fehErr: null
			}
		]);
		// The parallax-space point keeps the catalogue parallax: the fit removes the zero point itself.
		expect(prepared.parallaxPoints[0]).toMatchObject({ parallaxMas: 0.5, dereddenedMag: 8 - perEbv * 0.3 });
		expect(prepared.warnings).toEqual([]);
	});

	test('period error becomes σ_logP = σ_P/(P ln 10)', () => {
		const prepared = prepareCalibrators([row({ star: 'A', periodDays: 5, periodErrDays: 0.01 })], {
			bandId: 'Ic',
			anchor: 'parallax',
			extinctionLaw: 'ccm89'
		});
		expect(prepared.points[0].logPeriodErr).toBeCloseTo(0.01 / (5 * Math.LN10), 15);
	});

	test('no zero point is applied unless one is given', () => {
		const prepared = prepareCalibrators([row({ star: 'A', parallaxMas: 1 })], {
			bandId: 'V',
			anchor: 'parallax',
			extinctionLaw: 'ccm89'
		});
		expect(prepared.stars[0].distanceModulus?.value).toBe(10);
	});
});

describe('Wesenheit band', () => {
	test('W_VI from V and Ic, never dereddened; asking to deredden warns', () => {
		const prepared = prepareCalibrators([row({ star: 'A' })], {
			bandId: 'W_VI',
			anchor: 'parallax',
			extinctionLaw: 'ccm89',
			deredden: true
		});
		const [star] = prepared.stars;
		// W_VI = I − 1.55(V − I) (PRODUCT.md convention, from memory) = 7 − 1.55 = 5.45;
		// σ_W² = (1 + R)²σ_I² + R²σ_V² (first-order propagation, common practice).
		expect(star.apparentMag.value).toBeCloseTo(5.45, 12);
		expect(star.apparentMag.error).toBeCloseTo(Math.hypot(2.55 * 0.02, 1.55 * 0.02), 12);
		expect(star.extinction).toBe(0);
		expect(prepared.warnings.map((w) => w.code)).toEqual(['wesenheit_not_dereddened', 'parallax_zero_point_missing']);
	});

	test('a W magnitude given directly is used as is', () => {
		const prepared = prepareCalibrators([row({ star: 'A', mags: { W_VI: { value: 5.2, error: 0.03 } } })], {
			bandId: 'W_VI',
			anchor: 'parallax'
		});
		expect(prepared.stars[0].apparentMag).toEqual({ value: 5.2, error: 0.03 });
		expect(prepared.warnings.map((w) => w.code)).toEqual(['parallax_zero_point_missing']);
	});
});

describe('host anchor', () => {
	test("a named host's distance error is a shared systematic; an unnamed star's own is per-star", () => {
		// LMC μ = 18.477 ± 0.026 (Pietrzyński et al. 2019, from memory) shared by two stars.
		const lmc = { muHost: 18.477, muHostErr: 0.026, host: 'LMC', parallaxMas: null, parallaxErrMas: null };
		const rows = [
			row({ star: 'L1', ...lmc, mags: { W_VI: { value: 12, error: 0.02 } } }),
			row({ star: 'L2', ...lmc, mags: { W_VI: { value: 12.5, error: 0.02 } } }),
			row({ star: 'C1', muHost: 11, muHostErr: 0.1, parallaxMas: null, mags: { W_VI: { value: 6, error: 0.02 } } })
		];
		const prepared = prepareCalibrators(rows, { bandId: 'W_VI', anchor: 'host' });
		const [l1, , c1] = prepared.stars;
		expect(l1.absMag).toBeCloseTo(12 - 18.477, 12);
		expect(l1.absMagErr).toBeCloseTo(0.02, 12);
		expect(l1.distanceSystematicErr).toBe(0.026);
		expect(c1.absMagErr).toBeCloseTo(Math.hypot(0.02, 0.1), 12);
		expect(prepared.systematics).toEqual([
			{ kind: 'host_distance', host: 'LMC', value: 18.477, error: 0.026, stars: ['L1', 'L2'] }
		]);
	});

	test('stars naming the same host with different distances are refused', () => {
		const issues = issuesOf(() =>
			prepareCalibrators(
				[
					row({
						star: 'L1',
						host: 'LMC',
						muHost: 18.477,
						muHostErr: 0.026,
						mags: { W_VI: { value: 12, error: 0.02 } }
					}),
					row({ star: 'L2', host: 'LMC', muHost: 18.5, muHostErr: 0.026, mags: { W_VI: { value: 12, error: 0.02 } } })
				],
				{ bandId: 'W_VI', anchor: 'host' }
			)
		);
		expect(issues).toEqual([expect.objectContaining({ star: 'L2', field: 'muHost' })]);
	});
});

describe('selection and warnings', () => {
	test('population and log P filters exclude with a reason; fundamentalised first overtones; mixture flagged', () => {
		const rows = [
			row({ star: 'F10', periodDays: 10 }),
			row({ star: 'F150', periodDays: 150 }),
			row({ star: 'F05', periodDays: 0.5 }),
			row({ star: 'FO3', population: 'classical_first_overtone', periodDays: 3 }),
			row({ star: 'WV', population: 'type2_w_vir', periodDays: 12 })
		];
		const prepared = prepareCalibrators(rows, {
			bandId: 'W_VI',
			anchor: 'parallax',
			populations: ['classical_fundamental', 'classical_first_overtone'],
			logPeriodRange: { min: -0.5, max: 2.2 },
			fundamentalise: true
		});
		expect(prepared.excluded.map((e) => [e.star, e.code])).toEqual([['WV', 'population_not_selected']]);
		const fo = prepared.stars.find((s) => s.star === 'FO3');
		expect(fo?.fundamentalised).toBe(true);
		expect(fo?.fitPeriodDays).toBe(fundamentalisePeriod(3).periodDays);
		expect(fo?.logPeriod).toBeCloseTo(Math.log10(fundamentalisePeriod(3).periodDays), 15);
		const codes = prepared.warnings.map((w) => [w.code, w.star ?? null]);
		// Common practice: 0.5 d fundamental is RR Lyrae range, 150 d a long-period variable.
		expect(codes).toContainEqual(['period_below_rr_lyrae_limit', 'F05']);
		expect(codes).toContainEqual(['period_long_period_variable', 'F150']);
		expect(codes.filter(([, star]) => star === 'FO3')).toEqual([]);
		const mixture = prepared.warnings.find((w) => w.code === 'mixed_populations');
		expect(mixture?.details).toEqual({ classical_fundamental: 3, classical_first_overtone: 1 });

		const narrow = prepareCalibrators(rows, { bandId: 'W_VI', anchor: 'parallax', logPeriodRange: { min: 0, max: 2 } });
		expect(narrow.excluded.map((e) => [e.star, e.code])).toEqual([
			['F150', 'outside_period_range'],
			['F05', 'outside_period_range']
		]);
	});

	test('validity range warnings are passed through', () => {
		const prepared = prepareCalibrators([row({ star: 'A', periodDays: 60 })], {
			bandId: 'W_VI',
			anchor: 'parallax',
			validity: { logPeriodMin: 0.4, logPeriodMax: 1.5, fehMin: null, fehMax: null }
		});
		expect(prepared.warnings.map((w) => w.code)).toEqual(['outside_validity_range', 'parallax_zero_point_missing']);
	});
});

describe('input errors', () => {
	test('every problem is reported at once, naming star and field', () => {
		const issues = issuesOf(() =>
			prepareCalibrators(
				[
					row({ star: 'nanP', periodDays: Number.NaN }),
					row({ star: 'negP', periodDays: -3 }),
					row({ star: 'negPlx', parallaxMas: -0.1 }),
					row({ star: 'noV', mags: { Ic: { value: 7, error: 0.02 } } }),
					row({ star: 'noEbv', ebv: null })
				],
				{ bandId: 'V', anchor: 'parallax', extinctionLaw: 'ccm89' }
			)
		);
		expect(issues.map((i) => [i.star, i.field])).toEqual([
			['nanP', 'periodDays'],
			['negP', 'periodDays']
		]);
		const later = issuesOf(() =>
			prepareCalibrators(
				[
					row({ star: 'negPlx', parallaxMas: -0.1 }),
					row({ star: 'noV', mags: { Ic: { value: 7, error: 0.02 } } }),
					row({ star: 'noEbv', ebv: null }),
					row({ star: 'nanFeh', feh: Number.NaN })
				],
				{ bandId: 'V', anchor: 'parallax', extinctionLaw: 'ccm89' }
			)
		);
		expect(later.map((i) => [i.star, i.field])).toEqual([
			['negPlx', 'parallaxMas'],
			['noV', 'mags.V'],
			['noEbv', 'ebv'],
			['nanFeh', 'feh']
		]);
	});

	test('a single band without a law cannot be dereddened; missing Wesenheit components are named', () => {
		expect(issuesOf(() => prepareCalibrators([row({ star: 'A' })], { bandId: 'V', anchor: 'parallax' }))).toEqual([
			expect.objectContaining({ star: null, field: 'extinctionLaw' })
		]);
		const issues = issuesOf(() =>
			prepareCalibrators([row({ star: 'A', mags: { V: { value: 8, error: 0.02 } } })], {
				bandId: 'W_VI',
				anchor: 'parallax'
			})
		);
		expect(issues).toEqual([expect.objectContaining({ star: 'A', field: 'mags.Ic' })]);
	});

	test('non-positive parallaxes can be kept for the parallax-space fit only, with a warning', () => {
		const prepared = prepareCalibrators([row({ star: 'A' }), row({ star: 'far', parallaxMas: -0.05 })], {
			bandId: 'W_VI',
			anchor: 'parallax',
			nonPositiveParallax: 'parallax_space_only'
		});
		expect(prepared.points.map((p) => p.star)).toEqual(['A']);
		expect(prepared.parallaxPoints.map((p) => p.star)).toEqual(['A', 'far']);
		expect(prepared.warnings).toEqual([
			expect.objectContaining({ code: 'non_positive_parallax', star: 'far' }),
			expect.objectContaining({ code: 'parallax_zero_point_missing' })
		]);
	});
});

describe('parallax zero point: ϖ_true = ϖ_obs − ZP_star − ZP_adopted', () => {
	test('a positive zero point makes a star farther; a per-star correction is removed first, its error added', () => {
		const started = performance.now();
		// Sign convention of Lindegren et al. 2021 (A&A 649, A4): ZP = ϖ_obs − ϖ_true, so ϖ_true = ϖ_obs − ZP.
		const plain = prepareCalibrators([row({ star: 'A' })], { bandId: 'W_VI', anchor: 'parallax' });
		const positive = prepareCalibrators([row({ star: 'A' })], {
			bandId: 'W_VI',
			anchor: 'parallax',
			parallaxZeroPoint: { value: 0.02, error: 0.005 }
		});
		const muPlain = plain.stars[0].distanceModulus!.value;
		const muPositive = positive.stars[0].distanceModulus!.value;
		expect(muPositive).toBeGreaterThan(muPlain);
		expect(muPositive).toBeCloseTo(10 - 5 * Math.log10(0.5 - 0.02), 12);
		expect(positive.warnings.map((w) => w.code)).toEqual([]);
		const corrected = prepareCalibrators(
			[row({ star: 'A', parallaxZpCorrectionMas: -0.03, parallaxZpCorrectionErrMas: 0.01 })],
			{ bandId: 'W_VI', anchor: 'parallax', parallaxZeroPoint: { value: 0.014, error: 0.006 } }
		);
		const star = corrected.stars[0];
		expect(star.distanceModulus!.value).toBeCloseTo(10 - 5 * Math.log10(0.5 + 0.03 - 0.014), 12);
		expect(star.distanceModulus!.error).toBeCloseTo((FIVE_OVER_LN10 * Math.hypot(0.02, 0.01)) / 0.516, 12);
		// The adopted global zero point's error stays a systematic, outside the star's own error.
		expect(star.distanceSystematicErr).toBeCloseTo((FIVE_OVER_LN10 * 0.006) / 0.516, 12);
		expect(corrected.parallaxPoints[0].parallaxMas).toBeCloseTo(0.53, 15);
		console.log(`parallax zero-point sign: ${(performance.now() - started).toFixed(1)} ms`);
	});

	test('per-star corrections alone count as adopted; some stars without one warn, naming them', () => {
		const all = prepareCalibrators(
			[row({ star: 'A', parallaxZpCorrectionMas: -0.03 }), row({ star: 'B', parallaxZpCorrectionMas: -0.02 })],
			{ bandId: 'W_VI', anchor: 'parallax' }
		);
		expect(all.warnings).toEqual([]);
		const partial = prepareCalibrators([row({ star: 'A', parallaxZpCorrectionMas: -0.03 }), row({ star: 'B' })], {
			bandId: 'W_VI',
			anchor: 'parallax'
		});
		expect(partial.warnings).toEqual([
			expect.objectContaining({ code: 'parallax_zero_point_partial', message: expect.stringContaining('(B)') })
		]);
		const issues = issuesOf(() =>
			prepareCalibrators([row({ star: 'A', parallaxZpCorrectionErrMas: 0.01 })], { bandId: 'W_VI', anchor: 'parallax' })
		);
		expect(issues).toEqual([
			expect.objectContaining({
				star: 'A',
				field: 'parallaxZpCorrectionErrMas',
				message: expect.stringContaining('needs')
			})
		]);
	});
});

describe('Wesenheit ratio chosen by the curator', () => {
	test('W is formed with the chosen R; a W given directly with the catalogue R is refused, naming the star', () => {
		const chosen = prepareCalibrators([row({ star: 'A' })], {
			bandId: 'W_VI',
			anchor: 'parallax',
			parallaxZeroPoint: { value: 0, error: 0 },
			wesenheitRatio: 1.387
		});
		// W = I − R(V − I) (Madore 1982) with V − I = 1.
		expect(chosen.stars[0].apparentMag.value).toBeCloseTo(7 - 1.387, 12);
		const issues = issuesOf(() =>
			prepareCalibrators([row({ star: 'B', mags: { W_VI: { value: 5.2, error: 0.03 } } })], {
				bandId: 'W_VI',
				anchor: 'parallax',
				wesenheitRatio: 1.387
			})
		);
		expect(issues).toEqual([expect.objectContaining({ star: 'B', field: 'mags.W_VI' })]);
	});
});

const GALACTIC = 'galactic-calibrators';
describe.skipIf(!hasReferenceData(GALACTIC))(
	hasReferenceData(GALACTIC)
		? '44_Cepheids.csv prepared in W_VI with a parallax anchor (galactic-calibrators)'
		: missingReason(GALACTIC),
	() => {
		test("absolute W_VI equals W − mMplx, the file's own parallax distance modulus", () => {
			// Source: galactic-calibrators/44_Cepheids.csv (columns V_mag, I_mag, plxDR3, mMplx, Period).
			const [header, ...lines] = readReferenceFile(GALACTIC, '44_Cepheids.csv').trim().split('\n');
			const columns = header.split(',');
			const cells = lines.map((line) => line.split(','));
			const get = (c: string[], name: string) => Number(c[columns.indexOf(name)]);
			const rows: CalibratorRow[] = cells.map((c) => ({
				star: c[columns.indexOf('name')],
				population: 'classical_fundamental',
				periodDays: get(c, 'Period'),
				mags: { V: { value: get(c, 'V_mag'), error: 0.02 }, Ic: { value: get(c, 'I_mag'), error: 0.02 } },
				parallaxMas: get(c, 'plxDR3'),
				parallaxErrMas: 0.03
			}));
			const prepared = prepareCalibrators(rows, {
				bandId: 'W_VI',
				anchor: 'parallax',
				parallaxZeroPoint: { value: 0, error: 0 }
			});
			expect(prepared.points.length).toBe(44);
			let worst = 0;
			cells.forEach((c, i) => {
				const w = get(c, 'I_mag') - 1.55 * (get(c, 'V_mag') - get(c, 'I_mag'));
				worst = Math.max(worst, Math.abs(prepared.points[i].absMag - (w - get(c, 'mMplx'))));
			});
			expect(worst).toBeLessThan(1e-9);
			// The file's Period and logP columns agree (log10 of the period, to the 6 decimals printed).
			cells.forEach((c, i) => expect(Math.abs(prepared.points[i].logPeriod - get(c, 'logP'))).toBeLessThan(2e-6));
			expect(prepared.warnings).toEqual([]);
		});
	}
);
