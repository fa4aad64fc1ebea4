import type { Measured } from './types';
import { CalibrationInputError } from './types';

/**
 * Quasar-based global parallax zero point of Gaia EDR3/DR3, ZP = ϖ_obs − ϖ_true ≈ −0.017 mas
 * (Lindegren et al. 2021, A&A 649, A4; from memory). Never applied unless a caller passes it.
 */
export const GAIA_EDR3_GLOBAL_PARALLAX_ZERO_POINT_MAS = -0.017;

/** No zero-point correction. */
export const NO_PARALLAX_ZERO_POINT: Measured = { value: 0, error: 0 };

const FIVE_OVER_LN10 = 5 / Math.LN10;

export interface ParallaxInput {
	star: string;
	parallaxMas: number;
	parallaxErrMas: number;
}

export interface ParallaxDistanceModulus {
	star: string;
	/** ϖ_obs − ZP (mas). */
	correctedParallaxMas: number;
	/** μ = 10 − 5·log10(ϖ_obs − ZP). */
	value: number;
	/** Statistical error from the star's own σ_ϖ. */
	error: number;
	/**
	 * Error from the zero point's uncertainty. It is shared by every star corrected with the same
	 * zero point, so it must be carried as a systematic and never averaged down.
	 */
	systematicError: number;
}

/** Removes the catalogue zero point: ϖ_true = ϖ_obs − ZP. */
export function correctParallax(parallaxMas: number, zeroPoint: Measured = NO_PARALLAX_ZERO_POINT): number {
	return parallaxMas - zeroPoint.value;
}

/**
 * Distance modulus from a parallax, μ = 10 − 5·log10(ϖ[mas]) after removing the zero point,
 * with σ_μ = (5/ln 10)·σ_ϖ/ϖ (first-order propagation; common practice).
 * A non-positive corrected parallax has no distance and is refused naming the star.
 */
export function distanceModulusFromParallax(
	input: ParallaxInput,
	zeroPoint: Measured = NO_PARALLAX_ZERO_POINT
): ParallaxDistanceModulus {
	const issues = [];
	if (!Number.isFinite(input.parallaxMas)) {
		issues.push({
			star: input.star,
			field: 'parallaxMas',
			message: `parallax must be a finite number, got ${input.parallaxMas}`
		});
	}
	if (!Number.isFinite(input.parallaxErrMas) || input.parallaxErrMas < 0) {
		issues.push({
			star: input.star,
			field: 'parallaxErrMas',
			message: `parallax error must be a non-negative number, got ${input.parallaxErrMas}`
		});
	}
	if (!Number.isFinite(zeroPoint.value) || !Number.isFinite(zeroPoint.error) || zeroPoint.error < 0) {
		issues.push({
			star: input.star,
			field: 'parallaxZeroPoint',
			message: 'zero point must be finite with a non-negative error'
		});
	}
	if (issues.length > 0) throw new CalibrationInputError(issues);

	const corrected = correctParallax(input.parallaxMas, zeroPoint);
	if (!(corrected > 0)) {
		throw new CalibrationInputError([
			{
				star: input.star,
				field: 'parallaxMas',
				message: `corrected parallax ϖ − ZP = ${input.parallaxMas} − (${zeroPoint.value}) = ${corrected} mas is not positive`
			}
		]);
	}
	return {
		star: input.star,
		correctedParallaxMas: corrected,
		value: 10 - 5 * Math.log10(corrected),
		error: (FIVE_OVER_LN10 * input.parallaxErrMas) / corrected,
		systematicError: (FIVE_OVER_LN10 * zeroPoint.error) / corrected
	};
}

/**
 * Astrometry-based luminosity, ABL = 10^(0.2·M) = ϖ[mas]·10^(0.2·m0 − 2) (Arenou & Luri 1999).
 * Linear in ϖ, so it stays defined (and unbiased) for noisy or negative parallaxes.
 */
export function astrometricLuminosity(parallaxMas: number, dereddenedMag: number): number {
	return parallaxMas * 10 ** (0.2 * dereddenedMag - 2);
}

/** Absolute magnitude from a positive astrometry-based luminosity: M = 5·log10(ABL). */
export function absoluteMagnitudeFromAstrometricLuminosity(abl: number): number {
	return 5 * Math.log10(abl);
}

/**
 * Parallax a star of absolute magnitude M and dereddened apparent magnitude m0 would have:
 * ϖ[mas] = 10^(0.2·(M − m0) + 2), the inverse of μ = m0 − M = 10 − 5·log10 ϖ (common practice).
 */
export function predictedParallaxMas(absoluteMag: number, dereddenedMag: number): number {
	return 10 ** (0.2 * (absoluteMag - dereddenedMag) + 2);
}
