import { naturalCubicSpline } from './natural-cubic-spline';
import { polynomial } from './polynomial';

/** Fitzpatrick 1999's Galactic UV parameters (PASP 111, 63, Sect. 5 and Table 3). */
const UV_BUMP_CENTRE = 4.596;
const UV_BUMP_WIDTH = 0.99;
const UV_BUMP_STRENGTH = 3.23;
const FAR_UV_CURVATURE = 0.41;

/** The UV formula is used from 2700 Å (x = 3.7037 µm⁻¹) up; the spline below it. */
const UV_START = 1e4 / 2700;
/** Spline knots, µm⁻¹: x = 0 and 26 500, 12 200, 6000, 5470, 4670, 4110 Å, then the UV points 2700 and 2600 Å. */
const OPTICAL_IR_KNOTS = [0, 1e4 / 26500, 1e4 / 12200, 1e4 / 6000, 1e4 / 5470, 1e4 / 4670, 1e4 / 4110];
const UV_KNOTS = [1e4 / 2700, 1e4 / 2600];

/**
 * Fitzpatrick & Massa UV curve, k(λ − V) = E(λ − V)/E(B − V) (Fitzpatrick 1999, eq. 2 and Sect. 5):
 * k = c1 + c2·x + c3·D(x; x0, γ) + c4·F(x), D = x² / ((x² − x0²)² + x²γ²),
 * F = 0.5392(x − 5.9)² + 0.05644(x − 5.9)³ for x ≥ 5.9, else 0;
 * x0 = 4.596, γ = 0.99, c3 = 3.23, c4 = 0.41, c2 = −0.824 + 4.717/R_V, c1 = 2.030 − 3.007·c2.
 */
function uvColourExcessRatio(x: number, rV: number): number {
	const c2 = -0.824 + 4.717 / rV;
	const c1 = 2.03 - 3.007 * c2;
	const x2 = x * x;
	const bump = x2 / ((x2 - UV_BUMP_CENTRE ** 2) ** 2 + x2 * UV_BUMP_WIDTH ** 2);
	const t = x - 5.9;
	const farUv = x >= 5.9 ? 0.5392 * t * t + 0.05644 * t * t * t : 0;
	return c1 + c2 * x + UV_BUMP_STRENGTH * bump + FAR_UV_CURVATURE * farUv;
}

/**
 * Optical/IR anchor values A(λ)/E(B − V) at the knots for a given R_V (Fitzpatrick 1999, Table 3 and Sect. 5):
 * IR knots (x = 0, 26 500 Å, 12 200 Å) scale as (0, 0.26469, 0.82925)·R_V/3.1; the optical knots are
 * polynomials in R_V. The UV knots come from the UV formula, A/E(B − V) = k + R_V.
 */
function splineKnotValues(rV: number): number[] {
	const ir = [0, 0.26469, 0.82925].map((value) => (value * rV) / 3.1);
	const optical = [
		polynomial([-0.422809, 1.0027, 2.13572e-4], rV),
		polynomial([-5.1354e-2, 1.00216, -7.35778e-5], rV),
		polynomial([7.00127e-1, 1.00184, -3.32598e-5], rV),
		polynomial([1.19456, 1.01707, -5.46959e-3, 7.97809e-4, -4.45636e-5], rV)
	];
	const uv = UV_KNOTS.map((x) => uvColourExcessRatio(x, rV) + rV);
	return [...ir, ...optical, ...uv];
}

/** Spline knots of the F99 optical/IR curve for a given R_V, as (x in µm⁻¹, A(λ)/E(B − V)). */
export function fitzpatrick99Knots(rV: number): { x: number[]; aOverEbv: number[] } {
	return { x: [...OPTICAL_IR_KNOTS, ...UV_KNOTS], aOverEbv: splineKnotValues(rV) };
}

/**
 * A(λ)/E(B − V) of Fitzpatrick 1999 (PASP 111, 63): the FM UV formula plus R_V for x ≥ 3.7037 µm⁻¹,
 * a natural cubic spline through the R_V-dependent optical/IR knots and the two UV knots below it.
 */
export function fitzpatrick99PerEbv(x: number, rV: number): number {
	if (x >= UV_START) return uvColourExcessRatio(x, rV) + rV;
	const knots = fitzpatrick99Knots(rV);
	return naturalCubicSpline(knots.x, knots.aOverEbv)(x);
}

/** A(λ)/A(V) = [A(λ)/E(B − V)] / R_V of Fitzpatrick 1999. */
export function fitzpatrick99(x: number, rV: number): number {
	return fitzpatrick99PerEbv(x, rV) / rV;
}
