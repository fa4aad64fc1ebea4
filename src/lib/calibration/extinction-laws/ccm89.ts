import { polynomial } from './polynomial';

/** A(λ)/A(V) = a(x) + b(x)/R_V: the two wavelength functions of the CCM family of laws. */
export interface CurveCoefficients {
	a: number;
	b: number;
}

/** Optical/NIR piece, as a function of y = x − 1.82. */
export type OpticalPiece = (y: number) => CurveCoefficients;

/** Cardelli, Clayton & Mathis 1989 cover 0.3 ≤ x ≤ 10 µm⁻¹ (their Sect. III). */
export const CCM89_X_MIN = 0.3;
export const CCM89_X_MAX = 10;

const CCM89_OPTICAL_A = [1, 0.17699, -0.50447, -0.02427, 0.72085, 0.01979, -0.7753, 0.32999];
const CCM89_OPTICAL_B = [0, 1.41338, 2.28305, 1.07233, -5.38434, -0.62251, 5.3026, -2.09002];

/**
 * CCM89 optical/NIR polynomials, 1.1 ≤ x ≤ 3.3 µm⁻¹, y = x − 1.82 (CCM89 eq. 3a, 3b):
 * a = 1 + 0.17699y − 0.50447y² − 0.02427y³ + 0.72085y⁴ + 0.01979y⁵ − 0.77530y⁶ + 0.32999y⁷,
 * b = 1.41338y + 2.28305y² + 1.07233y³ − 5.38434y⁴ − 0.62251y⁵ + 5.30260y⁶ − 2.09002y⁷.
 */
export function ccm89Optical(y: number): CurveCoefficients {
	return { a: polynomial(CCM89_OPTICAL_A, y), b: polynomial(CCM89_OPTICAL_B, y) };
}

/**
 * CCM89 coefficients a(x), b(x) for 0.3 ≤ x ≤ 10 µm⁻¹ (Cardelli, Clayton & Mathis 1989, ApJ 345, 245):
 * - IR, 0.3 ≤ x < 1.1 (eq. 2): a = 0.574 x^1.61, b = −0.527 x^1.61;
 * - optical/NIR, 1.1 ≤ x < 3.3 (eq. 3): the `optical` piece (CCM89's, or O'Donnell 1994's);
 * - UV, 3.3 ≤ x ≤ 8 (eq. 4): a = 1.752 − 0.316x − 0.104/((x − 4.67)² + 0.341) + F_a(x),
 *   b = −3.090 + 1.825x + 1.206/((x − 4.62)² + 0.263) + F_b(x), with F_a = F_b = 0 for x < 5.9 and
 *   F_a = −0.04473(x − 5.9)² − 0.009779(x − 5.9)³, F_b = 0.2130(x − 5.9)² + 0.1207(x − 5.9)³ above;
 * - far-UV, 8 < x ≤ 10 (eq. 5): a = −1.073 − 0.628(x − 8) + 0.137(x − 8)² − 0.070(x − 8)³,
 *   b = 13.670 + 4.257(x − 8) − 0.420(x − 8)² + 0.374(x − 8)³.
 * The caller checks the range; outside it the pieces are extrapolated.
 */
export function ccmCoefficients(x: number, optical: OpticalPiece = ccm89Optical): CurveCoefficients {
	if (x < 1.1) {
		const p = x ** 1.61;
		return { a: 0.574 * p, b: -0.527 * p };
	}
	if (x < 3.3) return optical(x - 1.82);
	if (x <= 8) {
		let fa = 0;
		let fb = 0;
		if (x >= 5.9) {
			const t = x - 5.9;
			fa = -0.04473 * t * t - 0.009779 * t * t * t;
			fb = 0.213 * t * t + 0.1207 * t * t * t;
		}
		return {
			a: 1.752 - 0.316 * x - 0.104 / ((x - 4.67) ** 2 + 0.341) + fa,
			b: -3.09 + 1.825 * x + 1.206 / ((x - 4.62) ** 2 + 0.263) + fb
		};
	}
	const t = x - 8;
	return {
		a: polynomial([-1.073, -0.628, 0.137, -0.07], t),
		b: polynomial([13.67, 4.257, -0.42, 0.374], t)
	};
}

/** A(λ)/A(V) = a(x) + b(x)/R_V with the CCM89 pieces (CCM89 eq. 1). */
export function ccm89(x: number, rV: number): number {
	const { a, b } = ccmCoefficients(x);
	return a + b / rV;
}
