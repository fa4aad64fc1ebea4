/**
 * Period refinement by nonlinear least squares of the Fourier model with the frequency free.
 *
 * The model is linear in its coefficients, so χ² is minimised over the frequency alone with the
 * coefficients solved at each trial (variable projection; Golub & Pereyra 1973, SIAM J. Numer. Anal. 10,
 * 413), by successive parabolic interpolation within a shrinking bracket around the periodogram peak. The uncertainty is the
 * Gauss–Newton covariance (JᵀWJ)⁻¹ of the full model θ = (A₀, a_k, b_k, f) at the minimum, with
 *   ∂m/∂f = Σ_k 2πk (t − t₀)[−a_k sin 2πk f(t − t₀) + b_k cos 2πk f(t − t₀)],
 * t₀ the weighted mean time (it decorrelates f from the phases), scaled by max(1, χ²/ν) so that
 * underestimated photometric errors do not shrink it (common practice). σ_P = σ_f / f².
 */
import { inverse, Matrix, QrDecomposition } from 'ml-matrix';
import { fitFourier, fourierBasis, type FitSamples, type FourierFit } from './fourier-model';

export interface RefinedPeriod {
	frequency: number;
	frequencyErr: number;
	periodDays: number;
	periodErrDays: number;
	/** Fourier fit at the refined frequency, phases counted from `fit.timeZero`. */
	fit: FourierFit;
	/** max(1, χ²/ν) applied to the covariance. */
	covarianceScale: number;
	/** Full covariance of (A₀, a₁, b₁, …, f), already scaled. */
	covariance: number[][];
}

/** Parabola rounds; each narrows the bracket eightfold. */
export const REFINEMENT_ROUNDS = 5;
const SHRINK = 8;

export function weightedMeanTime(samples: Pick<FitSamples, 't' | 'err'>): number {
	let weightSum = 0;
	let total = 0;
	for (let i = 0; i < samples.t.length; i++) {
		const w = 1 / samples.err[i] ** 2;
		weightSum += w;
		total += w * samples.t[i];
	}
	return total / weightSum;
}

/**
 * Minimises χ²(f) for a Fourier model of the given order near f, starting with the bracket
 * [f − halfWidth, f + halfWidth]. Near its minimum χ²(f) is a parabola, so each round moves to the vertex
 * through three samples (kept inside the bracket) and narrows the bracket.
 */
export function refinePeriod(
	samples: FitSamples,
	startFrequency: number,
	order: number,
	halfWidth: number,
	rounds = REFINEMENT_ROUNDS
): RefinedPeriod {
	const timeZero = weightedMeanTime(samples);
	const chiSquareAt = (frequency: number) => fitFourier(samples, frequency, order, timeZero).chiSquare;
	let centre = startFrequency;
	let centreValue = chiSquareAt(centre);
	let width = halfWidth;
	for (let round = 0; round < rounds; round++) {
		const lower = chiSquareAt(centre - width);
		const upper = chiSquareAt(centre + width);
		const curvature = upper - 2 * centreValue + lower;
		let next = centre;
		if (curvature > 0) {
			next = centre - (width * (upper - lower)) / (2 * curvature);
			next = Math.min(centre + width, Math.max(centre - width, next));
		} else if (lower < centreValue || upper < centreValue) {
			next = lower < upper ? centre - width : centre + width;
		}
		const nextValue = next === centre ? centreValue : chiSquareAt(next);
		if (nextValue <= centreValue) {
			centre = next;
			centreValue = nextValue;
		}
		width /= SHRINK;
	}
	const frequency = centre;
	const fit = fitFourier(samples, frequency, order, timeZero);
	const covariance = fullCovariance(samples, fit);
	const dof = samples.t.length - (2 * order + 2);
	const covarianceScale = Math.max(1, dof > 0 ? fit.chiSquare / dof : 1);
	const scaled = covariance.map((row) => row.map((value) => value * covarianceScale));
	const last = scaled.length - 1;
	const frequencyErr = Math.sqrt(scaled[last][last]);
	return {
		frequency,
		frequencyErr,
		periodDays: 1 / frequency,
		periodErrDays: frequencyErr / (frequency * frequency),
		fit,
		covarianceScale,
		covariance: scaled
	};
}

/** (JᵀWJ)⁻¹ of (coefficients…, f) at the fit, by QR of the σ-scaled Jacobian. */
function fullCovariance(samples: FitSamples, fit: FourierFit): number[][] {
	const n = samples.t.length;
	const columns = 2 * fit.order + 2;
	const jacobian = new Matrix(n, columns);
	const basis = new Float64Array(2 * fit.order + 1);
	for (let i = 0; i < n; i++) {
		const dt = samples.t[i] - fit.timeZero;
		fourierBasis(dt * fit.frequency, fit.order, basis);
		const scale = 1 / samples.err[i];
		let frequencyDerivative = 0;
		for (let k = 1; k <= fit.order; k++) {
			const a = fit.coefficients[2 * k - 1];
			const b = fit.coefficients[2 * k];
			frequencyDerivative += 2 * Math.PI * k * dt * (-a * basis[2 * k] + b * basis[2 * k - 1]);
		}
		for (let j = 0; j < columns - 1; j++) jacobian.set(i, j, basis[j] * scale);
		jacobian.set(i, columns - 1, frequencyDerivative * scale);
	}
	const r = new QrDecomposition(jacobian).upperTriangularMatrix.subMatrix(0, columns - 1, 0, columns - 1);
	const rInverse = inverse(r);
	return rInverse.mmul(rInverse.transpose()).to2DArray();
}
