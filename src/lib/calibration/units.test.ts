import { describe, expect, test } from 'vitest';
import {
	ASTRONOMICAL_UNIT_M,
	H_ALPHA_AIR_NM,
	H_ALPHA_VACUUM_NM,
	JULIAN_YEAR_S,
	LIGHT_YEARS_PER_PARSEC,
	LIGHT_YEAR_M,
	PARSEC_M,
	SPEED_OF_LIGHT_KM_S
} from './constants';
import {
	convertDistance,
	distanceFromModulus,
	distanceModulusToParsecs,
	fluxRatioFromModulus,
	measuredDistanceFromModulus,
	measuredModulusFromDistance,
	modulusFromDistance,
	parsecsToDistanceModulus
} from './units';

describe('constants', () => {
	test('speed of light is the exact SI value (SI definition of the metre)', () => {
		expect(SPEED_OF_LIGHT_KM_S * 1000).toBe(299_792_458);
	});

	test('au is the exact IAU 2012 Resolution B2 value', () => {
		expect(ASTRONOMICAL_UNIT_M).toBe(149_597_870_700);
	});

	test('parsec equals the IAU 2015 Resolution B2 nominal 3.085 677 581 491 367e16 m', () => {
		// IAU 2015 B2 quotes pc = 648 000/π au = 3.085 677 581 491 367 × 10^16 m (16 significant digits).
		expect(Math.abs(PARSEC_M / 3.085677581491367e16 - 1)).toBeLessThan(1e-15);
	});

	test('light year is c × Julian year and 1 pc ≈ 3.261 564 ly (IAU; PRODUCT.md)', () => {
		expect(JULIAN_YEAR_S).toBe(31_557_600);
		expect(LIGHT_YEAR_M).toBe(9_460_730_472_580_800); // IAU: 1 ly = 9 460 730 472 580.8 km (exact by definition)
		expect(LIGHT_YEARS_PER_PARSEC).toBeCloseTo(3.261564, 6);
	});

	test('Hα rest wavelengths: ≈ 656.3 nm, vacuum longer than air by n − 1 ≈ 2.8e−4 (NIST, from memory; common practice)', () => {
		expect(H_ALPHA_AIR_NM).toBeCloseTo(656.3, 1);
		expect(H_ALPHA_VACUUM_NM).toBeCloseTo(656.3, 0);
		// Standard air refractive index near 656 nm is 1.000 276 (Edlén 1966 dispersion formula, from memory).
		expect(H_ALPHA_VACUUM_NM / H_ALPHA_AIR_NM - 1).toBeCloseTo(2.76e-4, 5);
	});
});

describe('distance modulus ⇄ distance', () => {
	test.each([
		// Definition of μ (common practice): μ = 0 at 10 pc, +5 mag per factor 10.
		[0, 10],
		[5, 100],
		[-5, 1],
		[25, 1e6],
		[30, 1e7]
	])('μ = %d ⇔ %d pc (definition μ = 5 log10(d/10 pc))', (mu, pc) => {
		expect(distanceModulusToParsecs(mu) / pc - 1).toBeCloseTo(0, 13);
		expect(parsecsToDistanceModulus(pc)).toBeCloseTo(mu, 12);
	});

	test('LMC at μ = 18.477 is 49.59 kpc (Pietrzyński et al. 2019, Nature 567, 200: 49.59 kpc, from memory)', () => {
		expect(distanceFromModulus(18.477, 'kpc')).toBeCloseTo(49.59, 1);
	});

	test('μ = 30 mag ⇔ flux ratio 10^12 ≈ 2.512^30 (Pogson ratio; common practice)', () => {
		expect(fluxRatioFromModulus(30) / 1e12 - 1).toBeCloseTo(0, 12);
		expect(fluxRatioFromModulus(30) / 2.512 ** 30 - 1).toBeLessThan(1e-3);
		expect(fluxRatioFromModulus(30)).toBeCloseTo(100 ** (30 / 5), -3);
	});

	test('10 Mpc ≈ 32.6 million light years (common practice)', () => {
		expect(convertDistance(10, 'Mpc', 'ly') / 1e6).toBeCloseTo(32.6, 1);
		expect(distanceFromModulus(modulusFromDistance(10, 'Mpc'), 'ly') / 1e6).toBeCloseTo(32.6156, 3);
	});

	test('σ_d = d·ln10/5·σ_μ agrees with a central finite difference (first-order propagation)', () => {
		const mu = { value: 29.5, error: 0.05 };
		const d = measuredDistanceFromModulus(mu, 'Mpc');
		const h = 1e-6;
		const slope = (distanceFromModulus(mu.value + h, 'Mpc') - distanceFromModulus(mu.value - h, 'Mpc')) / (2 * h);
		expect(d.error / (slope * mu.error) - 1).toBeCloseTo(0, 6);
		// 0.05 mag is 2.30% in distance: ln10/5 × 0.05 = 0.023026 (common practice: 0.1 mag ≈ 4.6%).
		expect(d.error / d.value).toBeCloseTo(0.023026, 6);
		const back = measuredModulusFromDistance(d, 'Mpc');
		expect(back.value).toBeCloseTo(mu.value, 12);
		expect(back.error).toBeCloseTo(mu.error, 12);
	});
});
