/**
 * Multi-harmonic Fourier model of a periodic light curve (Simon & Lee 1981, ApJ 248, 291):
 *
 *   m(t) = A₀ + Σ_{k=1..K} [a_k cos(2πk f t) + b_k sin(2πk f t)] = A₀ + Σ A_k cos(2πk f t + φ_k),
 *   A_k = √(a_k² + b_k²),  φ_k = atan2(−b_k, a_k),  R_k1 = A_k/A₁,  φ_k1 = φ_k − k·φ₁ (mod 2π),
 *
 * fitted by weighted linear least squares (QR of the σ-scaled design matrix, no normal equations).
 * The order K is the one with the lowest Bayesian information criterion for Gaussian errors known up to
 * a common scale, BIC = N·ln(χ²/N) + (2K + 1)·ln N (Schwarz 1978, Ann. Stat. 6, 461): photometric errors
 * are often understated by a common factor, which would make the χ² + k·ln N form add harmonics to fit noise.
 */
import { inverse, Matrix, QrDecomposition } from 'ml-matrix';
import type { PreparedSeries } from './series';

export type FitSamples = Pick<PreparedSeries, 't' | 'mag' | 'err'>;

export interface FourierFit {
	/** d⁻¹. */
	frequency: number;
	order: number;
	/** Time (in the samples' `t`) where phase 0 lies. */
	timeZero: number;
	/** [A₀, a₁, b₁, a₂, b₂, …]. */
	coefficients: number[];
	/** (AᵀWA)⁻¹ of the coefficients, from the stated errors (not rescaled). */
	covariance: number[][];
	chiSquare: number;
	degreesOfFreedom: number;
	bic: number;
	nPoints: number;
}

export interface FourierShape {
	amplitudes: number[];
	phases: number[];
	/** A₂/A₁ and A₃/A₁ (null when the order is too low). */
	r21: number | null;
	r31: number | null;
	/** φ₂ − 2φ₁ and φ₃ − 3φ₁ in [0, 2π). */
	phi21: number | null;
	phi31: number | null;
}

export const DEFAULT_MAX_FOURIER_ORDER = 8;

/** Row of the design matrix at phase φ (cycles): [1, cos 2πφ, sin 2πφ, cos 4πφ, …]. */
export function fourierBasis(
	phase: number,
	order: number,
	out: Float64Array = new Float64Array(2 * order + 1)
): Float64Array {
	out[0] = 1;
	const angle = 2 * Math.PI * phase;
	const c1 = Math.cos(angle);
	const s1 = Math.sin(angle);
	let c = 1;
	let s = 0;
	for (let k = 1; k <= order; k++) {
		const next = c * c1 - s * s1;
		s = s * c1 + c * s1;
		c = next;
		out[2 * k - 1] = c;
		out[2 * k] = s;
	}
	return out;
}

/** Model magnitude at phase φ (cycles from timeZero). */
export function fourierMagnitudeAtPhase(fit: Pick<FourierFit, 'order' | 'coefficients'>, phase: number): number {
	const basis = fourierBasis(phase, fit.order);
	let value = 0;
	for (let j = 0; j < basis.length; j++) value += fit.coefficients[j] * basis[j];
	return value;
}

export function fourierMagnitudeAtTime(fit: FourierFit, time: number): number {
	return fourierMagnitudeAtPhase(fit, (time - fit.timeZero) * fit.frequency);
}

/** BIC = N·ln(χ²/N) + k·ln N; a perfect fit (χ² = 0) is floored at the smallest positive double. */
export function informationCriterion(chiSquare: number, parameters: number, nPoints: number): number {
	return nPoints * Math.log(Math.max(chiSquare, Number.MIN_VALUE) / nPoints) + parameters * Math.log(nPoints);
}

/** Largest order a series of N points supports with at least two spare degrees of freedom. */
export function maxSupportedOrder(nPoints: number, cap = DEFAULT_MAX_FOURIER_ORDER): number {
	return Math.max(0, Math.min(cap, Math.floor((nPoints - 4) / 2)));
}

/** Weighted least-squares Fourier fit of order K at a fixed frequency. */
export function fitFourier(samples: FitSamples, frequency: number, order: number, timeZero = 0): FourierFit {
	const n = samples.t.length;
	const columns = 2 * order + 1;
	const design = new Matrix(n, columns);
	const target = new Matrix(n, 1);
	const row = new Float64Array(columns);
	for (let i = 0; i < n; i++) {
		fourierBasis((samples.t[i] - timeZero) * frequency, order, row);
		const scale = 1 / samples.err[i];
		for (let j = 0; j < columns; j++) design.set(i, j, row[j] * scale);
		target.set(i, 0, samples.mag[i] * scale);
	}
	const qr = new QrDecomposition(design);
	const coefficients = qr.solve(target).getColumn(0);
	const rInverse = inverse(qr.upperTriangularMatrix.subMatrix(0, columns - 1, 0, columns - 1));
	const covariance = rInverse.mmul(rInverse.transpose()).to2DArray();
	let chiSquare = 0;
	for (let i = 0; i < n; i++) {
		let model = 0;
		for (let j = 0; j < columns; j++) model += design.get(i, j) * coefficients[j];
		chiSquare += (target.get(i, 0) - model) ** 2;
	}
	return {
		frequency,
		order,
		timeZero,
		coefficients,
		covariance,
		chiSquare,
		degreesOfFreedom: n - columns,
		bic: informationCriterion(chiSquare, columns, n),
		nPoints: n
	};
}

export interface OrderChoice {
	fit: FourierFit;
	bicByOrder: { order: number; bic: number }[];
}

/**
 * BIC of every order K = 1 … maxOrder from one QR factorisation of the largest design matrix. Its columns
 * are ordered by harmonic, so the first 2K + 1 columns of Q span the order-K model and
 * χ²_K = ‖b‖² − Σ_{j<2K+1} (Qᵀb)_j², b the σ-scaled magnitudes.
 */
export function fourierOrderScan(
	samples: FitSamples,
	frequency: number,
	maxOrder = DEFAULT_MAX_FOURIER_ORDER,
	timeZero = 0
): { order: number; bic: number }[] {
	const n = samples.t.length;
	const limit = Math.max(1, maxSupportedOrder(n, maxOrder));
	const columns = 2 * limit + 1;
	const design = new Matrix(n, columns);
	const row = new Float64Array(columns);
	const target = new Float64Array(n);
	let total = 0;
	for (let i = 0; i < n; i++) {
		fourierBasis((samples.t[i] - timeZero) * frequency, limit, row);
		const scale = 1 / samples.err[i];
		for (let j = 0; j < columns; j++) design.set(i, j, row[j] * scale);
		target[i] = samples.mag[i] * scale;
		total += target[i] * target[i];
	}
	const q = new QrDecomposition(design).orthogonalMatrix;
	const scan: { order: number; bic: number }[] = [];
	let explained = 0;
	for (let j = 0; j < columns; j++) {
		let projection = 0;
		for (let i = 0; i < n; i++) projection += q.get(i, j) * target[i];
		explained += projection * projection;
		if (j >= 2 && j % 2 === 0) {
			const order = j / 2;
			scan.push({ order, bic: informationCriterion(Math.max(0, total - explained), j + 1, n) });
		}
	}
	return scan;
}

/** The order with the lowest BIC (ties to the lower order), and its fit. */
export function chooseFourierOrder(
	samples: FitSamples,
	frequency: number,
	maxOrder = DEFAULT_MAX_FOURIER_ORDER,
	timeZero = 0
): OrderChoice {
	const bicByOrder = fourierOrderScan(samples, frequency, maxOrder, timeZero);
	const best = bicByOrder.reduce((low, entry) => (entry.bic < low.bic ? entry : low), bicByOrder[0]);
	return { fit: fitFourier(samples, frequency, best.order, timeZero), bicByOrder };
}

function wrapAngle(angle: number): number {
	const twoPi = 2 * Math.PI;
	return ((angle % twoPi) + twoPi) % twoPi;
}

/** Amplitudes, phases and the Fourier parameters R21, R31, φ21, φ31. */
export function fourierShape(fit: Pick<FourierFit, 'order' | 'coefficients'>): FourierShape {
	const amplitudes: number[] = [];
	const phases: number[] = [];
	for (let k = 1; k <= fit.order; k++) {
		const a = fit.coefficients[2 * k - 1];
		const b = fit.coefficients[2 * k];
		amplitudes.push(Math.hypot(a, b));
		phases.push(wrapAngle(Math.atan2(-b, a)));
	}
	const ratio = (k: number) => (fit.order >= k && amplitudes[0] > 0 ? amplitudes[k - 1] / amplitudes[0] : null);
	const phaseDifference = (k: number) => (fit.order >= k ? wrapAngle(phases[k - 1] - k * phases[0]) : null);
	return { amplitudes, phases, r21: ratio(2), r31: ratio(3), phi21: phaseDifference(2), phi31: phaseDifference(3) };
}
