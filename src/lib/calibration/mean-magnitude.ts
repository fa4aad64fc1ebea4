/**
 * Mean magnitudes of a periodic light curve.
 *
 * Intensity mean:  ⟨m⟩ = −2.5·log10 ∫₀¹ 10^(−0.4·m(φ)) dφ   (the Cepheid convention; common practice)
 * Magnitude mean:  ⟨m⟩_mag = ∫₀¹ m(φ) dφ
 *
 * The integral over phase is the trapezoid rule on the phased curve, sorted by phase and wrapped
 * (the last point joins the first one cycle later). Its weights are w_i = (φ_{i+1} − φ_{i−1})/2 around
 * the circle, so for evenly spaced phases every w_i = 1/n and it is exactly the plain mean of the fluxes;
 * for uneven phases it stops clustered epochs from dominating. `method: 'mean'` forces equal weights.
 */
import { CalibrationInputError, type InputIssue, type Measured } from './types';

export interface PhasedPoint {
	/** Phase in cycles; any real number, reduced modulo 1. */
	phase: number;
	mag: number;
	magErr?: number;
}

export interface Epoch {
	/** Time of observation (days, e.g. HJD). */
	time: number;
	mag: number;
	magErr?: number;
}

export type MeanMethod = 'trapezoid' | 'mean';

export interface MeanMagnitudes {
	intensityMean: Measured;
	magnitudeMean: Measured;
	method: MeanMethod;
	nPoints: number;
}

const FLUX_PER_MAG = 0.4 * Math.LN10;

function reducePhase(phase: number): number {
	const reduced = phase - Math.floor(phase);
	return reduced === 1 ? 0 : reduced;
}

/** φ = frac((t − epoch)/P). */
export function phaseOf(time: number, periodDays: number, epoch = 0): number {
	return reducePhase((time - epoch) / periodDays);
}

/** Phases the epochs with the period and reference epoch. */
export function phaseEpochs(epochs: readonly Epoch[], periodDays: number, epoch = 0): PhasedPoint[] {
	if (!(periodDays > 0) || !Number.isFinite(periodDays)) {
		throw new CalibrationInputError([{ star: null, field: 'period_days', message: 'must be a finite number > 0' }]);
	}
	if (!Number.isFinite(epoch)) {
		throw new CalibrationInputError([{ star: null, field: 'epoch', message: 'must be finite' }]);
	}
	return epochs.map((point) => ({
		phase: phaseOf(point.time, periodDays, epoch),
		mag: point.mag,
		magErr: point.magErr
	}));
}

/** Trapezoid weights on the wrapped, phase-sorted curve; they sum to 1. */
function trapezoidWeights(sortedPhases: readonly number[]): number[] {
	const n = sortedPhases.length;
	if (n === 1) return [1];
	return sortedPhases.map((phase, i) => {
		const previous = i === 0 ? sortedPhases[n - 1] - 1 : sortedPhases[i - 1];
		const next = i === n - 1 ? sortedPhases[0] + 1 : sortedPhases[i + 1];
		return (next - previous) / 2;
	});
}

function validate(points: readonly PhasedPoint[]): void {
	const issues: InputIssue[] = [];
	if (points.length === 0) issues.push({ star: null, field: 'points', message: 'needs at least one point' });
	points.forEach((point, i) => {
		if (!Number.isFinite(point.phase)) issues.push({ star: `#${i}`, field: 'phase', message: 'must be finite' });
		if (!Number.isFinite(point.mag)) issues.push({ star: `#${i}`, field: 'mag', message: 'must be finite' });
		if (point.magErr !== undefined && !(point.magErr >= 0 && Number.isFinite(point.magErr))) {
			issues.push({ star: `#${i}`, field: 'magErr', message: 'must be finite and ≥ 0' });
		}
	});
	if (issues.length > 0) throw new CalibrationInputError(issues);
}

/**
 * Both means of a phased curve. Errors propagate the per-point errors through the (linear) weights:
 * σ_F̄² = Σ w_i² (0.4 ln10 F_i σ_i)², σ_⟨m⟩ = 2.5/ln10 · σ_F̄/F̄; σ_mag² = Σ w_i² σ_i².
 * They are zero when no point carries an error.
 */
export function meanMagnitudesFromPhasedCurve(
	points: readonly PhasedPoint[],
	method: MeanMethod = 'trapezoid'
): MeanMagnitudes {
	validate(points);
	const sorted = points
		.map((point) => ({ phase: reducePhase(point.phase), mag: point.mag, magErr: point.magErr ?? 0 }))
		.sort((p, q) => p.phase - q.phase);
	const n = sorted.length;
	const weights = method === 'mean' ? sorted.map(() => 1 / n) : trapezoidWeights(sorted.map((p) => p.phase));
	// Fluxes relative to the brightest point keep 10^(−0.4 m) well inside double range.
	const reference = Math.min(...sorted.map((p) => p.mag));
	let flux = 0;
	let fluxVar = 0;
	let mag = 0;
	let magVar = 0;
	sorted.forEach((point, i) => {
		const f = 10 ** (-0.4 * (point.mag - reference));
		flux += weights[i] * f;
		fluxVar += (weights[i] * FLUX_PER_MAG * f * point.magErr) ** 2;
		mag += weights[i] * point.mag;
		magVar += (weights[i] * point.magErr) ** 2;
	});
	return {
		intensityMean: { value: reference - 2.5 * Math.log10(flux), error: Math.sqrt(fluxVar) / (FLUX_PER_MAG * flux) },
		magnitudeMean: { value: mag, error: Math.sqrt(magVar) },
		method,
		nPoints: n
	};
}

/** Both means from time-stamped epochs, phased with the period and reference epoch. */
export function meanMagnitudesFromEpochs(
	epochs: readonly Epoch[],
	periodDays: number,
	epoch = 0,
	method: MeanMethod = 'trapezoid'
): MeanMagnitudes {
	return meanMagnitudesFromPhasedCurve(phaseEpochs(epochs, periodDays, epoch), method);
}

/** ⟨m⟩ = −2.5·log10 mean(10^(−0.4·m)): equal-weight intensity mean of magnitudes. */
export function intensityMean(mags: readonly number[]): number {
	const reference = Math.min(...mags);
	let sum = 0;
	for (const m of mags) sum += 10 ** (-0.4 * (m - reference));
	return reference - 2.5 * Math.log10(sum / mags.length);
}
