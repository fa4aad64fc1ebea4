/**
 * Quantities read off a fitted Fourier model over one cycle: peak-to-peak amplitude, phase of maximum
 * light (minimum magnitude) and the two mean magnitudes (definitions in ../mean-magnitude.ts).
 *
 * Both means are integrals of a smooth periodic function over a full cycle, which the rectangle rule on
 * evenly spaced phases approximates with spectral accuracy. Their errors follow from the coefficient
 * covariance Σ by the gradient g: σ² = gᵀΣg, with ∂⟨m⟩/∂c_j = ∫F·B_j dφ / ∫F dφ (F = 10^(−0.4 m),
 * B_j the basis functions) for the intensity mean and ∂⟨m⟩_mag/∂A₀ = 1 for the magnitude mean.
 */
import { intensityMean } from '../mean-magnitude';
import type { Measured } from '../types';
import { fourierBasis, fourierMagnitudeAtPhase, type FourierFit } from './fourier-model';

export interface ModelSummary {
	/** max m − min m over the cycle (mag). */
	peakToPeakAmplitude: number;
	/** Phase (cycles, [0, 1)) of minimum magnitude, i.e. maximum light. */
	phaseOfMaximumLight: number;
	phaseOfMinimumLight: number;
	meanMagIntensity: Measured;
	meanMagMagnitude: Measured;
}

const CYCLE_SAMPLES = 1024;
const GOLDEN = (Math.sqrt(5) - 1) / 2;

/** Golden-section search for the extremum of the model in [a, b] (sign −1 finds a maximum). */
function refineExtremum(fit: Pick<FourierFit, 'order' | 'coefficients'>, a: number, b: number, sign: number): number {
	let low = a;
	let high = b;
	const f = (phase: number) => sign * fourierMagnitudeAtPhase(fit, phase);
	let x1 = high - GOLDEN * (high - low);
	let x2 = low + GOLDEN * (high - low);
	let f1 = f(x1);
	let f2 = f(x2);
	for (let iteration = 0; iteration < 60 && high - low > 1e-12; iteration++) {
		if (f1 < f2) {
			high = x2;
			x2 = x1;
			f2 = f1;
			x1 = high - GOLDEN * (high - low);
			f1 = f(x1);
		} else {
			low = x1;
			x1 = x2;
			f1 = f2;
			x2 = low + GOLDEN * (high - low);
			f2 = f(x2);
		}
	}
	return polishExtremum(fit, (low + high) / 2);
}

/**
 * Newton steps on m′(φ) = 0: the golden-section search only locates a flat extremum to ~√ε, the root
 * of the derivative to ~ε.
 */
function polishExtremum(fit: Pick<FourierFit, 'order' | 'coefficients'>, start: number): number {
	let phase = start;
	for (let step = 0; step < 3; step++) {
		let first = 0;
		let second = 0;
		for (let k = 1; k <= fit.order; k++) {
			const omega = 2 * Math.PI * k;
			const c = Math.cos(omega * phase);
			const s = Math.sin(omega * phase);
			const a = fit.coefficients[2 * k - 1];
			const b = fit.coefficients[2 * k];
			first += omega * (-a * s + b * c);
			second -= omega * omega * (a * c + b * s);
		}
		if (second === 0) break;
		const next = phase - first / second;
		if (!Number.isFinite(next) || Math.abs(next - start) > 1 / CYCLE_SAMPLES) break;
		phase = next;
	}
	return phase;
}

function quadraticForm(gradient: ArrayLike<number>, covariance: number[][]): number {
	let total = 0;
	for (let i = 0; i < gradient.length; i++) {
		for (let j = 0; j < gradient.length; j++) total += gradient[i] * covariance[i][j] * gradient[j];
	}
	return total;
}

/**
 * Summary of the model. `covarianceScale` multiplies the covariance (e.g. the reduced χ² when the stated
 * errors are too small).
 */
export function summariseModel(
	fit: Pick<FourierFit, 'order' | 'coefficients' | 'covariance'>,
	covarianceScale = 1
): ModelSummary {
	const columns = 2 * fit.order + 1;
	const mags = new Float64Array(CYCLE_SAMPLES);
	let minIndex = 0;
	let maxIndex = 0;
	for (let s = 0; s < CYCLE_SAMPLES; s++) {
		mags[s] = fourierMagnitudeAtPhase(fit, s / CYCLE_SAMPLES);
		if (mags[s] < mags[minIndex]) minIndex = s;
		if (mags[s] > mags[maxIndex]) maxIndex = s;
	}
	const step = 1 / CYCLE_SAMPLES;
	const brightest = refineExtremum(fit, (minIndex - 1) * step, (minIndex + 1) * step, 1);
	const faintest = refineExtremum(fit, (maxIndex - 1) * step, (maxIndex + 1) * step, -1);
	const reduce = (phase: number) => phase - Math.floor(phase);

	const reference = mags[minIndex];
	const gradient = new Float64Array(columns);
	const basis = new Float64Array(columns);
	let fluxSum = 0;
	for (let s = 0; s < CYCLE_SAMPLES; s++) {
		const flux = 10 ** (-0.4 * (mags[s] - reference));
		fluxSum += flux;
		fourierBasis(s / CYCLE_SAMPLES, fit.order, basis);
		for (let j = 0; j < columns; j++) gradient[j] += flux * basis[j];
	}
	for (let j = 0; j < columns; j++) gradient[j] /= fluxSum;
	const intensityError = Math.sqrt(covarianceScale * quadraticForm(gradient, fit.covariance));
	return {
		peakToPeakAmplitude: fourierMagnitudeAtPhase(fit, faintest) - fourierMagnitudeAtPhase(fit, brightest),
		phaseOfMaximumLight: reduce(brightest),
		phaseOfMinimumLight: reduce(faintest),
		meanMagIntensity: { value: intensityMean(Array.from(mags)), error: intensityError },
		meanMagMagnitude: { value: fit.coefficients[0], error: Math.sqrt(covarianceScale * fit.covariance[0][0]) }
	};
}
