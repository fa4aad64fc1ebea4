import { ccmCoefficients, type CurveCoefficients } from './ccm89';
import { polynomial } from './polynomial';

const ODONNELL94_OPTICAL_A = [1, 0.104, -0.609, 0.701, 1.137, -1.718, -0.827, 1.647, -0.505];
const ODONNELL94_OPTICAL_B = [0, 1.952, 2.908, -3.989, -7.985, 11.102, 5.491, -10.805, 3.347];

/**
 * O'Donnell 1994 optical/NIR polynomials, 1.1 ≤ x ≤ 3.3 µm⁻¹, y = x − 1.82 (O'Donnell 1994, ApJ 422, 158, eq. 2):
 * a = 1 + 0.104y − 0.609y² + 0.701y³ + 1.137y⁴ − 1.718y⁵ − 0.827y⁶ + 1.647y⁷ − 0.505y⁸,
 * b = 1.952y + 2.908y² − 3.989y³ − 7.985y⁴ + 11.102y⁵ + 5.491y⁶ − 10.805y⁷ + 3.347y⁸.
 */
export function odonnell94Optical(y: number): CurveCoefficients {
	return { a: polynomial(ODONNELL94_OPTICAL_A, y), b: polynomial(ODONNELL94_OPTICAL_B, y) };
}

/** A(λ)/A(V): CCM89 with the optical piece replaced by O'Donnell 1994's; same range, 0.3 ≤ x ≤ 10 µm⁻¹. */
export function odonnell94(x: number, rV: number): number {
	const { a, b } = ccmCoefficients(x, odonnell94Optical);
	return a + b / rV;
}
