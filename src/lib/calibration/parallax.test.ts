import { describe, expect, test } from 'vitest';
import {
	absoluteMagnitudeFromAstrometricLuminosity,
	astrometricLuminosity,
	distanceModulusFromParallax,
	GAIA_EDR3_GLOBAL_PARALLAX_ZERO_POINT_MAS,
	predictedParallaxMas
} from './parallax';
import { CalibrationInputError } from './types';
import { hasReferenceData, missingReason, readReferenceFile } from '../../../tests/support/reference-data';

describe('distance modulus from a parallax', () => {
	test('ϖ = 1 mas gives μ = 10 (d = 1 kpc; common practice)', () => {
		const mu = distanceModulusFromParallax({ star: 'one-kpc', parallaxMas: 1, parallaxErrMas: 0.1 });
		expect(mu.value).toBe(10);
		// σ_μ = (5/ln 10)·σ_ϖ/ϖ = 0.2171 mag for 10 % (first-order propagation, common practice).
		expect(mu.error).toBeCloseTo(0.21715, 5);
		expect(mu.systematicError).toBe(0);
	});

	test.each([
		// [ϖ mas, μ]: μ = 10 − 5 log10 ϖ, i.e. 10 pc ↔ 100 mas ↔ μ = 0 (common practice).
		[100, 0],
		[10, 5],
		[0.1, 15]
	])('ϖ = %s mas gives μ = %s', (parallaxMas, expected) => {
		expect(distanceModulusFromParallax({ star: 's', parallaxMas, parallaxErrMas: 0 }).value).toBeCloseTo(expected, 12);
	});

	test('a negative zero point is removed with its sign: ϖ_true = ϖ_obs − ZP is larger, μ smaller', () => {
		// Lindegren et al. 2021 (A&A 649, A4; from memory): Gaia parallaxes are too small by ~17 µas, ZP = −0.017.
		const zp = { value: GAIA_EDR3_GLOBAL_PARALLAX_ZERO_POINT_MAS, error: 0.005 };
		const raw = distanceModulusFromParallax({ star: 's', parallaxMas: 0.5, parallaxErrMas: 0.02 });
		const corrected = distanceModulusFromParallax({ star: 's', parallaxMas: 0.5, parallaxErrMas: 0.02 }, zp);
		expect(GAIA_EDR3_GLOBAL_PARALLAX_ZERO_POINT_MAS).toBe(-0.017);
		expect(corrected.correctedParallaxMas).toBeCloseTo(0.517, 12);
		expect(corrected.value).toBeCloseTo(10 - 5 * Math.log10(0.517), 12);
		expect(corrected.value).toBeLessThan(raw.value);
		// The zero point's error is kept apart: (5/ln 10)·0.005/0.517 = 0.0210 mag, not in the star's own error.
		expect(corrected.systematicError).toBeCloseTo((5 / Math.LN10) * (0.005 / 0.517), 12);
		expect(corrected.error).toBeCloseTo((5 / Math.LN10) * (0.02 / 0.517), 12);
	});

	test('refuses a non-positive corrected parallax, naming the star', () => {
		expect(() =>
			distanceModulusFromParallax(
				{ star: 'far-away', parallaxMas: 0.01, parallaxErrMas: 0.03 },
				{ value: 0.02, error: 0 }
			)
		).toThrow(CalibrationInputError);
		try {
			distanceModulusFromParallax({ star: 'far-away', parallaxMas: -0.2, parallaxErrMas: 0.03 });
		} catch (error) {
			expect((error as CalibrationInputError).issues).toEqual([
				expect.objectContaining({ star: 'far-away', field: 'parallaxMas' })
			]);
		}
		expect(() => distanceModulusFromParallax({ star: 'nan', parallaxMas: Number.NaN, parallaxErrMas: 0.03 })).toThrow(
			/nan: parallaxMas/
		);
	});
});

describe('astrometry-based luminosity (Arenou & Luri 1999)', () => {
	test('ABL = 10^(0.2 M) = ϖ·10^(0.2 m0 − 2) is consistent with μ = m0 − M', () => {
		// A star at 1 kpc (ϖ = 1 mas, μ = 10) with m0 = 6 has M = −4: ABL = 10^(−0.8).
		expect(astrometricLuminosity(1, 6)).toBeCloseTo(10 ** -0.8, 14);
		expect(absoluteMagnitudeFromAstrometricLuminosity(astrometricLuminosity(1, 6))).toBeCloseTo(-4, 12);
		expect(predictedParallaxMas(-4, 6)).toBeCloseTo(1, 14);
		// Linear in ϖ: a negative parallax gives a negative ABL instead of an undefined magnitude.
		expect(astrometricLuminosity(-0.1, 6)).toBeLessThan(0);
	});
});

const GALACTIC = 'galactic-calibrators';
describe.skipIf(!hasReferenceData(GALACTIC))(
	hasReferenceData(GALACTIC) ? '44_Cepheids.csv cross-check (galactic-calibrators)' : missingReason(GALACTIC),
	() => {
		test('the file’s mMplx equals 10 − 5·log10(plxDR3) for every star (no zero point applied)', () => {
			// Source: galactic-calibrators/44_Cepheids.csv, columns plxDR3 (mas) and mMplx (mag).
			const [header, ...lines] = readReferenceFile('galactic-calibrators', '44_Cepheids.csv').trim().split('\n');
			const columns = header.split(',');
			const rows = lines.map((line) => line.split(','));
			expect(rows.length).toBe(44);
			let worst = 0;
			for (const cells of rows) {
				const star = cells[columns.indexOf('name')];
				const mu = distanceModulusFromParallax({
					star,
					parallaxMas: Number(cells[columns.indexOf('plxDR3')]),
					parallaxErrMas: 0
				});
				worst = Math.max(worst, Math.abs(mu.value - Number(cells[columns.indexOf('mMplx')])));
			}
			expect(worst).toBeLessThan(1e-9);
		});
	}
);
