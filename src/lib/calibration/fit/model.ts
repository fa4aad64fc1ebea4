import type { CoefficientAxis } from '../types';
import { determinant, inverse, Matrix } from 'ml-matrix';
import { RankDeficientDesignError, solveLeastSquares } from './least-squares';
import type { CalibratorPoint, FitMethod } from './types';

/** Calibrators in the coordinates the fit works in: x = log P − p0, f = [Fe/H] − f0. */
export interface FitData {
	stars: string[];
	x: Float64Array;
	f: Float64Array | null;
	y: Float64Array;
	varY: Float64Array;
	varX: Float64Array;
	varF: Float64Array;
	hasCoordinateErrors: boolean;
	/** All zero; stands in for an absent column in the closed-form solver. */
	zeros: Float64Array;
}

/** What is fitted: the free axes in covariance order, and the coefficients held fixed. */
export interface FitModel {
	method: FitMethod;
	axes: CoefficientAxis[];
	fixedZeroPoint: number | null;
	fixedSlope: number | null;
	/** How ml_scatter estimates σ_int; ignored by the other methods. */
	scatterEstimator?: IntrinsicScatterEstimator;
}

/** Fitted zero point, slope and γ (fixed ones filled in), in axis order for the free ones. */
export interface ModelFit {
	zeroPoint: number;
	slope: number;
	metallicityTerm: number;
	free: number[];
	/** Fit weights 1/vᵢ aligned with the indices fitted (all 1 for ols). */
	weights: Float64Array;
}

/** Solves the weighted linear problem over `indices`; null when the design is degenerate. */
export type WeightedSolver = (
	data: FitData,
	model: FitModel,
	indices: ArrayLike<number>,
	weights: Float64Array
) => number[] | null;

export function prepareFitData(
	points: readonly CalibratorPoint[],
	pivotLogPeriod: number,
	pivotFeh: number,
	withMetallicity: boolean
): FitData {
	const n = points.length;
	const data: FitData = {
		stars: points.map((point) => point.star),
		x: new Float64Array(n),
		f: withMetallicity ? new Float64Array(n) : null,
		y: new Float64Array(n),
		varY: new Float64Array(n),
		varX: new Float64Array(n),
		varF: new Float64Array(n),
		hasCoordinateErrors: false,
		zeros: new Float64Array(n)
	};
	points.forEach((point, i) => {
		data.x[i] = point.logPeriod - pivotLogPeriod;
		data.y[i] = point.absMag;
		data.varY[i] = point.absMagErr ** 2;
		data.varX[i] = (point.logPeriodErr ?? 0) ** 2;
		if (data.f) {
			data.f[i] = (point.feh as number) - pivotFeh;
			data.varF[i] = (point.fehErr ?? 0) ** 2;
		}
		if (data.varX[i] > 0 || data.varF[i] > 0) data.hasCoordinateErrors = true;
	});
	return data;
}

/** Response after moving the fixed terms to the left: y − a_fixed − b_fixed·x. */
export function adjustedResponse(data: FitData, model: FitModel, i: number): number {
	return data.y[i] - (model.fixedZeroPoint ?? 0) - (model.fixedSlope ?? 0) * data.x[i];
}

/** Row i of the design matrix over the free axes. */
export function designRow(data: FitData, model: FitModel, i: number): number[] {
	return model.axes.map((axis) =>
		axis === 'zero_point' ? 1 : axis === 'slope' ? data.x[i] : (data.f as Float64Array)[i]
	);
}

export function expandCoefficients(model: FitModel, free: number[], weights: Float64Array): ModelFit {
	const value = (axis: CoefficientAxis) => free[model.axes.indexOf(axis)];
	return {
		zeroPoint: model.fixedZeroPoint ?? value('zero_point'),
		slope: model.fixedSlope ?? value('slope'),
		metallicityTerm: model.axes.includes('metallicity_term') ? value('metallicity_term') : 0,
		free,
		weights
	};
}

export function predict(data: FitData, fit: Omit<ModelFit, 'weights' | 'free'>, i: number): number {
	return fit.zeroPoint + fit.slope * data.x[i] + (data.f ? fit.metallicityTerm * data.f[i] : 0);
}

/** Total variance of star i: vᵢ = σ_M,i² + b²σ_logP,i² + γ²σ_[Fe/H],i² + σ_int². */
export function starVariance(
	data: FitData,
	slope: number,
	metallicityTerm: number,
	intrinsicVariance: number,
	i: number
): number {
	return (
		data.varY[i] + slope * slope * data.varX[i] + metallicityTerm * metallicityTerm * data.varF[i] + intrinsicVariance
	);
}

/** Generic solver: Householder QR of the weighted design (see least-squares.ts). */
export const qrSolver: WeightedSolver = (data, model, indices, weights) => {
	const design: number[][] = [];
	const response: number[] = [];
	for (let k = 0; k < indices.length; k++) {
		design.push(designRow(data, model, indices[k]));
		response.push(adjustedResponse(data, model, indices[k]));
	}
	try {
		return solveLeastSquares({ design, response, weights: Array.from(weights) }).coefficients;
	} catch (error) {
		if (error instanceof RankDeficientDesignError || error instanceof RangeError) return null;
		throw error;
	}
};

/**
 * Closed-form weighted solve for at most two columns besides the intercept. With an intercept the
 * data are centred on their weighted means first, b = S⁻¹·s with S_jk = Σw(c_j − c̄_j)(c_k − c̄_k),
 * s_j = Σw(c_j − c̄_j)(y − ȳ), then a = ȳ − Σ b_j c̄_j (Cramer's rule for the 2×2 case).
 * For a line this makes S a single number, so the solve is exactly conditioned and the only rounding
 * left is in the centred sums, which carry no cancellation: safe instead of a matrix decomposition in
 * the bootstrap's inner loop. With period and [Fe/H] both free, S is 2×2 and conditioned like the
 * correlation of the two, which is benign for calibrator samples.
 */
export const closedFormSolver: WeightedSolver = (data, model, indices, weights) => {
	const hasIntercept = model.axes[0] === 'zero_point';
	const columns = model.axes
		.filter((axis) => axis !== 'zero_point')
		.map((axis) => (axis === 'slope' ? data.x : (data.f as Float64Array)));
	if (columns.length > 2) return qrSolver(data, model, indices, weights);
	const m = indices.length;
	const { y, x } = data;
	const fixedZeroPoint = model.fixedZeroPoint ?? 0;
	const fixedSlope = model.fixedSlope ?? 0;
	const c0 = columns[0] ?? data.zeros;
	const c1 = columns[1] ?? data.zeros;

	let sumW = 0;
	const means = [0, 0];
	let meanY = 0;
	if (hasIntercept) {
		let sum0 = 0;
		let sum1 = 0;
		for (let k = 0; k < m; k++) {
			const i = indices[k];
			const w = weights[k];
			sumW += w;
			meanY += w * (y[i] - fixedZeroPoint - fixedSlope * x[i]);
			sum0 += w * c0[i];
			sum1 += w * c1[i];
		}
		meanY /= sumW;
		means[0] = sum0 / sumW;
		means[1] = sum1 / sumW;
	}
	const mean0 = means[0];
	const mean1 = means[1];
	let s00 = 0;
	let s01 = 0;
	let s11 = 0;
	let t0 = 0;
	let t1 = 0;
	for (let k = 0; k < m; k++) {
		const i = indices[k];
		const w = weights[k];
		const dy = y[i] - fixedZeroPoint - fixedSlope * x[i] - meanY;
		const d0 = c0[i] - mean0;
		const d1 = c1[i] - mean1;
		s00 += w * d0 * d0;
		s01 += w * d0 * d1;
		s11 += w * d1 * d1;
		t0 += w * d0 * dy;
		t1 += w * d1 * dy;
	}
	// Spreads at rounding level mean the draw cannot separate the coefficients (e.g. one period only).
	const negligible = (spread: number, j: number) =>
		!(spread > (sumW || 1) * (1e3 * Number.EPSILON * (Math.abs(means[j]) + 1)) ** 2);
	let slopes: number[];
	if (columns.length === 0) {
		slopes = [];
	} else if (columns.length === 1) {
		if (negligible(s00, 0)) return null;
		slopes = [t0 / s00];
	} else {
		const determinant = s00 * s11 - s01 * s01;
		if (negligible(s00, 0) || negligible(s11, 1) || !(determinant > 1e-12 * s00 * s11)) return null;
		slopes = [(t0 * s11 - t1 * s01) / determinant, (t1 * s00 - t0 * s01) / determinant];
	}
	if (!hasIntercept) return slopes;
	let intercept = meanY;
	for (let j = 0; j < slopes.length; j++) intercept -= slopes[j] * means[j];
	return [intercept, ...slopes];
};

const MAX_VARIANCE_ITERATIONS = 100;

/**
 * Coefficients at a given intrinsic variance. Weights are 1/vᵢ (see starVariance); when period or
 * metallicity errors are present vᵢ depends on b and γ, so the weighted solve is repeated with
 * updated weights until the coefficients stop changing (effective-variance method, Orear 1982,
 * Am. J. Phys. 50, 912, from memory). Ordinary least squares uses unit weights.
 */
export function fitAtIntrinsicVariance(
	data: FitData,
	model: FitModel,
	indices: ArrayLike<number>,
	intrinsicVariance: number,
	solver: WeightedSolver
): ModelFit | null {
	const m = indices.length;
	const weights = new Float64Array(m);
	if (model.method === 'ols') {
		weights.fill(1);
		const free = solver(data, model, indices, weights);
		return free ? expandCoefficients(model, free, weights) : null;
	}
	let slope = model.fixedSlope ?? 0;
	let metallicityTerm = 0;
	let previous: number[] | null = null;
	for (let iteration = 0; iteration < MAX_VARIANCE_ITERATIONS; iteration++) {
		for (let k = 0; k < m; k++) {
			weights[k] = 1 / starVariance(data, slope, metallicityTerm, intrinsicVariance, indices[k]);
		}
		const free = solver(data, model, indices, weights);
		if (!free) return null;
		const expanded = expandCoefficients(model, free, weights);
		const settled =
			!data.hasCoordinateErrors ||
			(previous !== null &&
				free.every((value, j) => Math.abs(value - (previous as number[])[j]) <= 1e-13 * (1 + Math.abs(value))));
		if (settled || iteration === MAX_VARIANCE_ITERATIONS - 1) {
			if (data.hasCoordinateErrors) {
				for (let k = 0; k < m; k++) {
					weights[k] = 1 / starVariance(data, expanded.slope, expanded.metallicityTerm, intrinsicVariance, indices[k]);
				}
			}
			return expanded;
		}
		previous = free;
		slope = expanded.slope;
		metallicityTerm = expanded.metallicityTerm;
	}
	return null;
}

/** ln L = −½ Σ [rᵢ²/vᵢ + ln(2π vᵢ)] for independent Gaussian residuals. */
export function gaussianLogLikelihood(data: FitData, fit: ModelFit, indices: ArrayLike<number>): number {
	let sum = 0;
	for (let k = 0; k < indices.length; k++) {
		const i = indices[k];
		const residual = data.y[i] - predict(data, fit, i);
		const variance = 1 / fit.weights[k];
		sum += (residual * residual) / variance + Math.log(2 * Math.PI * variance);
	}
	return -0.5 * sum;
}

/**
 * How σ_int is estimated: `ml` maximises the likelihood of the residuals, which is biased low by
 * about (n − p)/n because the coefficients were fitted to the same stars; `reml` maximises the
 * restricted likelihood of the residuals' p-dimensional complement instead (Patterson & Thompson
 * 1971, Biometrika 58, 545), which for equal errors σ gives the unbiased σ_int² = Σr²/(n − p) − σ².
 */
export type IntrinsicScatterEstimator = 'ml' | 'reml';

/** XᵀWX over the free axes, and the design rows it was built from. */
function weightedNormalMatrix(data: FitData, model: FitModel, indices: ArrayLike<number>, weights: Float64Array) {
	const p = model.axes.length;
	const rows = Array.from({ length: indices.length }, (_, k) => designRow(data, model, indices[k]));
	const normal = Matrix.zeros(p, p);
	for (let k = 0; k < rows.length; k++) {
		for (let a = 0; a < p; a++)
			for (let b = 0; b < p; b++) normal.set(a, b, normal.get(a, b) + weights[k] * rows[k][a] * rows[k][b]);
	}
	return { rows, normal };
}

/**
 * Σᵢ wᵢhᵢ with hᵢ = wᵢ·xᵢᵀ(XᵀWX)⁻¹xᵢ, the leverages of the weighted fit: the derivative of
 * ln|XᵀWX| with respect to σ_int² is −Σ wᵢhᵢ.
 */
function weightedLeverageSum(
	data: FitData,
	model: FitModel,
	indices: ArrayLike<number>,
	weights: Float64Array
): number {
	const { rows, normal } = weightedNormalMatrix(data, model, indices, weights);
	const inverted = inverse(normal);
	let sum = 0;
	for (let k = 0; k < rows.length; k++) {
		const row = Matrix.rowVector(rows[k]);
		sum += weights[k] * weights[k] * row.mmul(inverted).mmul(row.transpose()).get(0, 0);
	}
	return sum;
}

/**
 * Restricted log-likelihood −½[Σ ln(2π vᵢ) + Σ rᵢ²/vᵢ + ln|XᵀWX|] at the fit's weights
 * (Harville 1977, JASA 72, 320, up to a constant).
 */
export function restrictedLogLikelihood(
	data: FitData,
	model: FitModel,
	fit: ModelFit,
	indices: ArrayLike<number>
): number {
	const { normal } = weightedNormalMatrix(data, model, indices, fit.weights);
	return gaussianLogLikelihood(data, fit, indices) - 0.5 * Math.log(determinant(normal));
}

export interface ScatterFit {
	fit: ModelFit;
	intrinsicScatter: number;
	/** The maximised objective: ln L for `ml`, the restricted ln L for `reml`. */
	logLikelihood: number;
	/** Profile of that objective as a function of σ_int, for error estimates. */
	profile: (intrinsicScatter: number) => number;
}

/**
 * Maximum-likelihood intrinsic scatter. With vᵢ = σ_M,i² + b²σ_logP,i² + σ_int² and the coefficients
 * at each σ_int the weighted solution (which minimises Σrᵢ²/vᵢ, so they drop out of the derivative),
 * the profile log-likelihood −½Σ[rᵢ²/vᵢ + ln vᵢ] is stationary in t = σ_int² where
 *   S(t) = Σ rᵢ²/vᵢ² − Σ 1/vᵢ = 0.
 * S(0) ≤ 0 puts the maximum at σ_int = 0; otherwise S changes sign from + to − between 0 and a
 * bracket grown from the equal-error solution mean(rᵢ²) − mean(σ_M,i²), and the root is found by the Illinois
 * variant of regula falsi (Dowell & Jarratt 1971, BIT 11, 168), a fixed sequence of steps, so the
 * result is deterministic.
 * With `reml` the restricted likelihood adds −½ln|XᵀWX|, whose derivative in t adds Σ wᵢhᵢ (the
 * weighted leverages) to S(t); the root is found the same way.
 */
export function fitIntrinsicScatter(
	data: FitData,
	model: FitModel,
	indices: ArrayLike<number>,
	solver: WeightedSolver,
	estimator: IntrinsicScatterEstimator = 'ml'
): ScatterFit | null {
	const m = indices.length;
	const atVariance = (t: number) => fitAtIntrinsicVariance(data, model, indices, t, solver);
	const score = (fit: ModelFit) => {
		let sum = 0;
		for (let k = 0; k < m; k++) {
			const i = indices[k];
			const w = fit.weights[k];
			const residual = data.y[i] - predict(data, fit, i);
			sum += w * (w * residual * residual - 1);
		}
		return estimator === 'reml' ? sum + weightedLeverageSum(data, model, indices, fit.weights) : sum;
	};
	const objective = (fit: ModelFit) =>
		estimator === 'reml'
			? restrictedLogLikelihood(data, model, fit, indices)
			: gaussianLogLikelihood(data, fit, indices);
	const finish = (fit: ModelFit | null, t: number): ScatterFit | null =>
		fit
			? {
					fit,
					intrinsicScatter: Math.sqrt(t),
					logLikelihood: objective(fit),
					profile: (value) => {
						const at = atVariance(value * value);
						return at ? objective(at) : -Infinity;
					}
				}
			: null;

	const atZero = atVariance(0);
	if (!atZero) return null;
	let fa = score(atZero);
	if (!(fa > 0)) return finish(atZero, 0);

	const unweighted = fitAtIntrinsicVariance(data, { ...model, method: 'ols' }, indices, 0, solver);
	if (!unweighted) return null;
	let meanSquare = 0;
	for (let k = 0; k < m; k++) meanSquare += (data.y[indices[k]] - predict(data, unweighted, indices[k])) ** 2 / m;
	// For equal errors σ the root is t = mean(r²) − σ²; start from that guess and bracket around it.
	let meanVariance = 0;
	for (let k = 0; k < m; k++) meanVariance += data.varY[indices[k]] / m;
	let guess = Math.max(meanSquare - meanVariance, 0.01 * meanSquare);
	let a = 0;
	let b = guess;
	let fitB = atVariance(b);
	if (!fitB) return null;
	let fb = score(fitB);
	for (let widen = 0; fb > 0 && widen < 60; widen++) {
		a = b;
		fa = fb;
		guess *= 2;
		b = a + guess;
		fitB = atVariance(b);
		if (!fitB) return null;
		fb = score(fitB);
	}
	if (fb > 0) return finish(fitB, b);

	let side = 0;
	let root = b;
	let rootFit: ModelFit | null = fitB;
	const tolerance = 1e-14 * b;
	for (let iteration = 0; iteration < 200 && b - a > tolerance; iteration++) {
		const c = (a * fb - b * fa) / (fb - fa);
		const fitC = atVariance(c);
		if (!fitC) return null;
		const fc = score(fitC);
		const step = Math.abs(c - root);
		root = c;
		rootFit = fitC;
		if (fc === 0 || step <= tolerance) break;
		if (fc < 0) {
			b = c;
			fb = fc;
			if (side === -1) fa /= 2;
			side = -1;
		} else {
			a = c;
			fa = fc;
			if (side === 1) fb /= 2;
			side = 1;
		}
	}
	return finish(rootFit, root);
}

/**
 * 1σ error of σ_int from the profile likelihood: half the width of the interval where
 * ln L ≥ ln L_max − ½ (truncated at σ_int = 0), the likelihood-ratio interval of Wilks' theorem
 * (common practice).
 */
export function intrinsicScatterError(scatterFit: ScatterFit): number {
	const { intrinsicScatter: best, logLikelihood: peak, profile } = scatterFit;
	const target = peak - 0.5;
	const bisect = (inside: number, outside: number) => {
		for (let step = 0; step < 200 && Math.abs(outside - inside) > 1e-9 * (1 + Math.abs(best)); step++) {
			const middle = (inside + outside) / 2;
			if (profile(middle) >= target) inside = middle;
			else outside = middle;
		}
		return (inside + outside) / 2;
	};
	let step = Math.max(best, 1e-3);
	let outside = best + step;
	while (profile(outside) >= target && step < 1e6) {
		step *= 2;
		outside = best + step;
	}
	const upper = bisect(best, outside);
	const lower = best > 0 && profile(0) < target ? bisect(best, 0) : 0;
	return (upper - lower) / 2;
}
