/**
 * Period–luminosity fits to parallax calibrators, in parallax space and, for comparison and as the
 * starting point, on inverted parallaxes.
 *
 * Why parallax space: a parallax's error is Gaussian in ϖ, but μ = 10 − 5·log10 ϖ is non-linear, so a
 * symmetric error in ϖ becomes a skewed error in μ and M whose mean is not zero once σ_ϖ/ϖ is not
 * small; weights 1/σ_μ² ∝ ϖ_obs² favour stars whose parallax scattered high, and ϖ ≤ 0 cannot be
 * inverted at all, which truncates the sample (Lutz–Kelker-type biases). Comparing the predicted
 * parallax ϖ_pred = 10^(0.2·(M − m0) + 2) with ϖ_obs keeps every residual Gaussian and uses every
 * star, negative parallaxes included (the astrometry-based luminosity idea of Arenou & Luri 1999).
 */
import { Matrix, QrDecomposition, SingularValueDecomposition } from 'ml-matrix';
import type { CoefficientAxis, Coefficients, Covariance, InputIssue, Measured } from './types';
import { CalibrationInputError } from './types';
import { NO_PARALLAX_ZERO_POINT, predictedParallaxMas } from './parallax';

/** A parallax calibrator: dereddened apparent magnitude and the catalogue parallax as published. */
export interface ParallaxFitPoint {
	star: string;
	logPeriod: number;
	logPeriodErr?: number | null;
	/** m0 = m − A (mag); for a Wesenheit band, W itself. */
	dereddenedMag: number;
	/** Photometric and reddening error of m0 (mag). */
	dereddenedMagErr: number;
	/** ϖ_obs as in the catalogue, zero point not removed (mas). */
	parallaxMas: number;
	parallaxErrMas: number;
	feh?: number | null;
	fehErr?: number | null;
}

export interface ParallaxFitOptions {
	/** p0; default 1. */
	pivotLogPeriod?: number;
	/** f0; default 0. */
	pivotFeh?: number;
	metallicityTerm?: boolean;
	/** Adopted catalogue zero point ZP (ϖ_obs = ϖ_true + ZP); default none. Its error is a systematic. */
	parallaxZeroPoint?: Measured;
	/**
	 * Fit a residual offset δ on top of the adopted zero point: ϖ_obs = ϖ_pred + ZP + δ. The zero point
	 * then rests on the spread of the parallaxes, and magnitude noise dilutes it like noise in a regressor:
	 * a comes out brighter by ≈ 5·log10(V/(V + N)), V = Var(ϖ), N = ⟨(0.2·ln 10·ϖ·σ_m)²⟩, a fraction of σ_a.
	 */
	fitParallaxOffset?: boolean;
	/**
	 * Add the magnitude-side error to the parallax variance:
	 * σ_eff² = σ_ϖ² + (0.2·ln 10·ϖ_pred)²·(σ_m0² + b²σ_logP² + γ²σ_feh² + σ_int²). Default true.
	 */
	inflateForMagnitudeError?: boolean;
	/** σ_int (mag) held fixed, entering the inflation above; default 0. */
	intrinsicScatter?: number;
}

export interface ParallaxResidual {
	star: string;
	predictedParallaxMas: number;
	/** ϖ_obs − ZP − δ − ϖ_pred (mas). */
	parallaxResidualMas: number;
	/** σ_eff used for the star (mas). */
	effectiveErrorMas: number;
	normalizedResidual: number;
}

export interface CoefficientErrors {
	zeroPoint: number;
	slope: number;
	metallicityTerm: number | null;
	parallaxOffset: number | null;
}

export interface ParallaxFitResult {
	method: 'parallax_space';
	pivotLogPeriod: number;
	pivotFeh: number;
	coefficients: Coefficients;
	/** Fitted δ (mas), same sign convention as the zero point; null when not fitted. */
	parallaxOffsetMas: number | null;
	errors: CoefficientErrors;
	/** Statistical covariance from the Jacobian at the solution, (JᵀWJ)⁻¹ with W = 1/σ_eff². */
	covariance: Covariance;
	/**
	 * Adopted zero point with the systematic it puts on the coefficients, (∂θ/∂ZP)²·σ_ZP², shared by all
	 * stars and not contained in `covariance`.
	 */
	parallaxZeroPoint: Measured;
	systematicCovariance: Covariance;
	/** ∂θ/∂ZP (per mas) along `covariance.axes`: how each coefficient moves as the adopted zero point grows. */
	zeroPointSensitivity: number[];
	chiSquare: number;
	degreesOfFreedom: number;
	reducedChiSquare: number | null;
	starsUsed: number;
	residuals: ParallaxResidual[];
	iterations: number;
	converged: boolean;
	/** The inverted-parallax fit the iteration started from. */
	start: InvertedParallaxFitResult;
}

export interface InvertedParallaxResidual {
	star: string;
	absMag: number;
	absMagErr: number;
	/** M − M_fit (mag). */
	residual: number;
}

export interface InvertedParallaxFitResult {
	method: 'inverted_parallax';
	pivotLogPeriod: number;
	pivotFeh: number;
	coefficients: Coefficients;
	errors: CoefficientErrors;
	covariance: Covariance;
	parallaxZeroPoint: Measured;
	systematicCovariance: Covariance;
	chiSquare: number;
	degreesOfFreedom: number;
	reducedChiSquare: number | null;
	starsUsed: number;
	/** Stars whose corrected parallax is not positive: they have no M and are left out. */
	excludedStars: string[];
	residuals: InvertedParallaxResidual[];
}

const LN10_OVER_5 = Math.LN10 / 5;
const FIVE_OVER_LN10 = 5 / Math.LN10;
const MAX_REWEIGHTINGS = 50;
const MAX_DAMPED_STEPS = 200;
const PARAMETER_TOLERANCE = 1e-12;
const CHI_SQUARE_TOLERANCE = 1e-14;

interface ResolvedOptions {
	pivotLogPeriod: number;
	pivotFeh: number;
	metallicityTerm: boolean;
	parallaxZeroPoint: Measured;
	fitParallaxOffset: boolean;
	inflateForMagnitudeError: boolean;
	intrinsicScatter: number;
}

function resolveOptions(options: ParallaxFitOptions): ResolvedOptions {
	return {
		pivotLogPeriod: options.pivotLogPeriod ?? 1,
		pivotFeh: options.pivotFeh ?? 0,
		metallicityTerm: options.metallicityTerm ?? false,
		parallaxZeroPoint: options.parallaxZeroPoint ?? NO_PARALLAX_ZERO_POINT,
		fitParallaxOffset: options.fitParallaxOffset ?? false,
		inflateForMagnitudeError: options.inflateForMagnitudeError ?? true,
		intrinsicScatter: options.intrinsicScatter ?? 0
	};
}

function isNonNegative(value: number | null | undefined): boolean {
	return value === null || value === undefined || (Number.isFinite(value) && value >= 0);
}

function validatePoints(points: readonly ParallaxFitPoint[], options: ResolvedOptions): void {
	const issues: InputIssue[] = [];
	for (const point of points) {
		const star = point.star;
		const finite: [keyof ParallaxFitPoint, number][] = [
			['logPeriod', point.logPeriod],
			['dereddenedMag', point.dereddenedMag],
			['parallaxMas', point.parallaxMas]
		];
		for (const [field, value] of finite) {
			if (!Number.isFinite(value)) issues.push({ star, field, message: `must be a finite number, got ${value}` });
		}
		if (!(Number.isFinite(point.parallaxErrMas) && point.parallaxErrMas > 0)) {
			issues.push({ star, field: 'parallaxErrMas', message: `must be positive, got ${point.parallaxErrMas}` });
		}
		if (!(Number.isFinite(point.dereddenedMagErr) && point.dereddenedMagErr >= 0)) {
			issues.push({ star, field: 'dereddenedMagErr', message: `must be non-negative, got ${point.dereddenedMagErr}` });
		}
		if (!isNonNegative(point.logPeriodErr))
			issues.push({ star, field: 'logPeriodErr', message: 'must be non-negative' });
		if (!isNonNegative(point.fehErr)) issues.push({ star, field: 'fehErr', message: 'must be non-negative' });
		if (options.metallicityTerm && !Number.isFinite(point.feh ?? NaN)) {
			issues.push({ star, field: 'feh', message: 'a metallicity term needs [Fe/H] for every star' });
		}
	}
	const zp = options.parallaxZeroPoint;
	if (!Number.isFinite(zp.value) || !(Number.isFinite(zp.error) && zp.error >= 0)) {
		issues.push({ star: null, field: 'parallaxZeroPoint', message: 'must be finite with a non-negative error' });
	}
	if (!(Number.isFinite(options.intrinsicScatter) && options.intrinsicScatter >= 0)) {
		issues.push({ star: null, field: 'intrinsicScatter', message: 'must be non-negative' });
	}
	if (issues.length > 0) throw new CalibrationInputError(issues);
}

function axesFor(options: ResolvedOptions, withOffset: boolean): CoefficientAxis[] {
	const axes: CoefficientAxis[] = ['zero_point', 'slope'];
	if (options.metallicityTerm) axes.push('metallicity_term');
	if (withOffset) axes.push('parallax_offset');
	return axes;
}

/** Row of the linear predictor M = a + b(log P − p0) [+ γ(feh − f0)]. */
function designRow(point: ParallaxFitPoint, options: ResolvedOptions): number[] {
	const row = [1, point.logPeriod - options.pivotLogPeriod];
	if (options.metallicityTerm) row.push((point.feh as number) - options.pivotFeh);
	return row;
}

function dot(a: readonly number[], b: readonly number[]): number {
	let sum = 0;
	for (let i = 0; i < a.length; i++) sum += a[i] * b[i];
	return sum;
}

interface WeightedSolution {
	covariance: number[][];
	step: number[];
}

/**
 * Least squares of the weighted system J·x ≈ r, optionally damped (Levenberg–Marquardt):
 * x = Σ sₖ/(sₖ² + λ)·(uₖ·r)·vₖ over the singular triplets of J with unit-norm columns. J = QR first, then
 * the SVD of the small R (J = (QU′)SVᵀ), so JᵀJ is never formed; covariance (JᵀJ)⁻¹ = D⁻¹VS⁻²VᵀD⁻¹.
 */
function solveWeighted(jacobian: number[][], rhs: number[], damping: number): WeightedSolution {
	const columns = jacobian[0].length;
	const norms = Array.from({ length: columns }, (_, k) =>
		Math.sqrt(jacobian.reduce((sum, row) => sum + row[k] ** 2, 0))
	);
	if (norms.some((norm) => !(norm > 0))) {
		throw new CalibrationInputError([{ star: null, field: 'logPeriod', message: 'the design has an empty column' }]);
	}
	const qr = new QrDecomposition(new Matrix(jacobian.map((row) => row.map((value, k) => value / norms[k]))));
	const projected = qr.orthogonalMatrix.transpose().mmul(Matrix.columnVector(rhs));
	const svd = new SingularValueDecomposition(qr.upperTriangularMatrix);
	const singular = svd.diagonal;
	const largest = Math.max(...singular);
	if (!(Math.min(...singular) > largest * 1e-12)) {
		throw new CalibrationInputError([
			{
				star: null,
				field: 'logPeriod',
				message: 'the calibrators do not constrain every coefficient (degenerate design)'
			}
		]);
	}
	const u = svd.leftSingularVectors;
	const v = svd.rightSingularVectors;
	const step = new Array<number>(columns).fill(0);
	const covariance = Array.from({ length: columns }, () => new Array<number>(columns).fill(0));
	for (let k = 0; k < columns; k++) {
		let projection = 0;
		for (let i = 0; i < columns; i++) projection += u.get(i, k) * projected.get(i, 0);
		const s = singular[k];
		const factor = (s / (s * s + damping)) * projection;
		for (let j = 0; j < columns; j++) {
			step[j] += factor * v.get(j, k);
			for (let l = 0; l < columns; l++) covariance[j][l] += (v.get(j, k) * v.get(l, k)) / (s * s);
		}
	}
	return {
		step: step.map((value, j) => value / norms[j]),
		covariance: covariance.map((row, j) => row.map((value, l) => value / (norms[j] * norms[l])))
	};
}

function symmetric(matrix: number[][]): number[][] {
	return matrix.map((row, i) => row.map((_, j) => (matrix[i][j] + matrix[j][i]) / 2));
}

function outer(vector: readonly number[], scale: number): number[][] {
	return vector.map((a) => vector.map((b) => a * b * scale));
}

function coefficientsFrom(theta: readonly number[], options: ResolvedOptions): Coefficients {
	return {
		zeroPoint: theta[0],
		slope: theta[1],
		metallicityTerm: options.metallicityTerm ? theta[2] : null
	};
}

function errorsFrom(covariance: number[][], axes: CoefficientAxis[]): CoefficientErrors {
	const error = (axis: CoefficientAxis) => {
		const index = axes.indexOf(axis);
		return index < 0 ? null : Math.sqrt(covariance[index][index]);
	};
	return {
		zeroPoint: error('zero_point') as number,
		slope: error('slope') as number,
		metallicityTerm: error('metallicity_term'),
		parallaxOffset: error('parallax_offset')
	};
}

/**
 * Weighted linear fit of M_i = m0,i − μ_i with μ_i = 10 − 5·log10(ϖ_obs,i − ZP), the usual but biased
 * estimator at low parallax S/N (see the module comment). σ_M,i² = σ_m0,i² + ((5/ln 10)·σ_ϖ,i/ϖ_i)² + σ_int².
 * Stars with ϖ_obs − ZP ≤ 0 have no M and are listed in `excludedStars`.
 */
export function fitInvertedParallax(
	points: readonly ParallaxFitPoint[],
	options: ParallaxFitOptions = {}
): InvertedParallaxFitResult {
	const resolved = resolveOptions(options);
	validatePoints(points, resolved);
	const zp = resolved.parallaxZeroPoint;
	const usable = points.filter((point) => point.parallaxMas - zp.value > 0);
	const excludedStars = points.filter((point) => !(point.parallaxMas - zp.value > 0)).map((point) => point.star);
	const axes = axesFor(resolved, false);
	if (usable.length <= axes.length) {
		throw new CalibrationInputError([
			{
				star: null,
				field: 'parallaxMas',
				message: `${usable.length} stars with a positive parallax cannot fit ${axes.length} coefficients`
			}
		]);
	}
	const rows = usable.map((point) => {
		const parallax = point.parallaxMas - zp.value;
		const absMag = point.dereddenedMag - (10 - 5 * Math.log10(parallax));
		const muErr = (FIVE_OVER_LN10 * point.parallaxErrMas) / parallax;
		const absMagErr = Math.sqrt(point.dereddenedMagErr ** 2 + muErr ** 2 + resolved.intrinsicScatter ** 2);
		return { point, parallax, absMag, absMagErr, design: designRow(point, resolved) };
	});
	const jacobian = rows.map((row) => row.design.map((value) => value / row.absMagErr));
	const { step: theta, covariance } = solveWeighted(
		jacobian,
		rows.map((row) => row.absMag / row.absMagErr),
		0
	);
	const residuals = rows.map((row) => ({
		star: row.point.star,
		absMag: row.absMag,
		absMagErr: row.absMagErr,
		residual: row.absMag - dot(row.design, theta)
	}));
	const chiSquare = residuals.reduce((sum, r) => sum + (r.residual / r.absMagErr) ** 2, 0);
	const degreesOfFreedom = usable.length - axes.length;
	// ∂M_i/∂ZP = −(5/ln 10)/ϖ_i, so the coefficients move by C·Jᵀ·(∂M/∂ZP / σ) per unit ZP.
	const sensitivity = covariance.map(
		(covRow) =>
			-dot(
				covRow,
				axes.map((_, k) =>
					rows.reduce((sum, row, i) => sum + jacobian[i][k] * (FIVE_OVER_LN10 / row.parallax / row.absMagErr), 0)
				)
			)
	);
	return {
		method: 'inverted_parallax',
		pivotLogPeriod: resolved.pivotLogPeriod,
		pivotFeh: resolved.pivotFeh,
		coefficients: coefficientsFrom(theta, resolved),
		errors: errorsFrom(covariance, axes),
		covariance: { axes, matrix: symmetric(covariance) },
		parallaxZeroPoint: zp,
		systematicCovariance: { axes, matrix: outer(sensitivity, zp.error ** 2) },
		chiSquare,
		degreesOfFreedom,
		reducedChiSquare: degreesOfFreedom > 0 ? chiSquare / degreesOfFreedom : null,
		starsUsed: usable.length,
		excludedStars,
		residuals
	};
}

interface ModelState {
	predicted: number[];
	effectiveErrors: number[];
}

/**
 * Fits M = a + b(log P − p0) [+ γ([Fe/H] − f0)] by comparing, star by star,
 * ϖ_obs,i − ZP [− δ] with ϖ_pred,i = 10^(0.2·(M_i − m0,i) + 2) (Arenou & Luri 1999), minimising
 * χ² = Σ (ϖ_obs,i − ZP − δ − ϖ_pred,i)² / σ_eff,i². Damped Gauss–Newton (Levenberg–Marquardt) with
 * ∂ϖ_pred/∂M = 0.2·ln 10·ϖ_pred; σ_eff is refreshed from the current solution until it is
 * self-consistent. Deterministic: it always starts from the inverted-parallax fit (δ = 0) and uses no
 * randomness. Covariance (JᵀWJ)⁻¹ from the Jacobian at the solution.
 */
export function fitParallaxSpace(
	points: readonly ParallaxFitPoint[],
	options: ParallaxFitOptions = {}
): ParallaxFitResult {
	const resolved = resolveOptions(options);
	validatePoints(points, resolved);
	const axes = axesFor(resolved, resolved.fitParallaxOffset);
	if (points.length <= axes.length) {
		throw new CalibrationInputError([
			{ star: null, field: 'parallaxMas', message: `${points.length} stars cannot fit ${axes.length} coefficients` }
		]);
	}
	const start = fitInvertedParallax(points, options);
	const zp = resolved.parallaxZeroPoint;
	const designs = points.map((point) => designRow(point, resolved));
	const observed = points.map((point) => point.parallaxMas - zp.value);
	const linearAxes = designs[0].length;

	const evaluate = (theta: readonly number[]): ModelState => {
		const predicted = points.map((point, i) => predictedParallaxMas(dot(designs[i], theta), point.dereddenedMag));
		const effectiveErrors = points.map((point, i) => {
			if (!resolved.inflateForMagnitudeError) return point.parallaxErrMas;
			const slope = theta[1];
			const gamma = resolved.metallicityTerm ? theta[2] : 0;
			const magVariance =
				point.dereddenedMagErr ** 2 +
				(slope * (point.logPeriodErr ?? 0)) ** 2 +
				(gamma * (point.fehErr ?? 0)) ** 2 +
				resolved.intrinsicScatter ** 2;
			return Math.sqrt(point.parallaxErrMas ** 2 + (LN10_OVER_5 * predicted[i]) ** 2 * magVariance);
		});
		return { predicted, effectiveErrors };
	};
	const residualOf = (theta: readonly number[], state: ModelState, i: number) =>
		observed[i] - (resolved.fitParallaxOffset ? theta[linearAxes] : 0) - state.predicted[i];
	const chiSquareOf = (theta: readonly number[], weights: readonly number[]) => {
		const state = evaluate(theta);
		return points.reduce((sum, _, i) => sum + (residualOf(theta, state, i) / weights[i]) ** 2, 0);
	};
	const jacobianOf = (state: ModelState, weights: readonly number[]) =>
		points.map((_, i) => {
			const dPredicted = LN10_OVER_5 * state.predicted[i];
			const row = designs[i].map((value) => (dPredicted * value) / weights[i]);
			if (resolved.fitParallaxOffset) row.push(1 / weights[i]);
			return row;
		});

	let theta = [start.coefficients.zeroPoint, start.coefficients.slope];
	if (resolved.metallicityTerm) theta.push(start.coefficients.metallicityTerm ?? 0);
	if (resolved.fitParallaxOffset) theta.push(0);
	let iterations = 0;
	let converged = false;
	for (let reweighting = 0; reweighting < MAX_REWEIGHTINGS && !converged; reweighting++) {
		const weights = evaluate(theta).effectiveErrors;
		const before = [...theta];
		let damping = 1e-3;
		let chiSquare = chiSquareOf(theta, weights);
		for (let step = 0; step < MAX_DAMPED_STEPS; step++) {
			iterations++;
			const state = evaluate(theta);
			const jacobian = jacobianOf(state, weights);
			const rhs = points.map((_, i) => residualOf(theta, state, i) / weights[i]);
			const { step: delta } = solveWeighted(jacobian, rhs, damping);
			const trial = theta.map((value, k) => value + delta[k]);
			const trialChiSquare = chiSquareOf(trial, weights);
			const small = delta.every((d, k) => Math.abs(d) <= PARAMETER_TOLERANCE * (1 + Math.abs(theta[k])));
			// At the minimum a step changes χ² only by rounding; stop instead of damping on noise.
			const flat = Math.abs(trialChiSquare - chiSquare) <= CHI_SQUARE_TOLERANCE * chiSquare;
			if (trialChiSquare <= chiSquare) {
				theta = trial;
				chiSquare = trialChiSquare;
				damping = Math.max(damping / 10, 1e-12);
				if (small || flat) break;
			} else {
				if (small || flat) break;
				damping *= 10;
				if (damping > 1e12) break;
			}
		}
		converged = theta.every((value, k) => Math.abs(value - before[k]) <= 1e-10 * (1 + Math.abs(value)));
	}

	const state = evaluate(theta);
	const weights = state.effectiveErrors;
	const jacobian = jacobianOf(state, weights);
	const { covariance } = solveWeighted(jacobian, new Array<number>(points.length).fill(0), 0);
	const residuals = points.map((point, i) => {
		const residual = residualOf(theta, state, i);
		return {
			star: point.star,
			predictedParallaxMas: state.predicted[i],
			parallaxResidualMas: residual,
			effectiveErrorMas: weights[i],
			normalizedResidual: residual / weights[i]
		};
	});
	const chiSquare = residuals.reduce((sum, r) => sum + r.normalizedResidual ** 2, 0);
	const degreesOfFreedom = points.length - axes.length;
	// Shifting the adopted ZP moves every residual by −1 mas per mas, so ∂θ/∂ZP = −C·Jᵀ·(1/σ).
	const sensitivity = covariance.map(
		(covRow) =>
			-dot(
				covRow,
				axes.map((_, k) => jacobian.reduce((sum, row, i) => sum + row[k] / weights[i], 0))
			)
	);
	return {
		method: 'parallax_space',
		pivotLogPeriod: resolved.pivotLogPeriod,
		pivotFeh: resolved.pivotFeh,
		coefficients: coefficientsFrom(theta, resolved),
		parallaxOffsetMas: resolved.fitParallaxOffset ? theta[linearAxes] : null,
		errors: errorsFrom(covariance, axes),
		covariance: { axes, matrix: symmetric(covariance) },
		parallaxZeroPoint: zp,
		systematicCovariance: { axes, matrix: outer(sensitivity, zp.error ** 2) },
		zeroPointSensitivity: sensitivity,
		chiSquare,
		degreesOfFreedom,
		reducedChiSquare: degreesOfFreedom > 0 ? chiSquare / degreesOfFreedom : null,
		starsUsed: points.length,
		residuals,
		iterations,
		converged,
		start
	};
}

/** Correlation coefficient of two named axes of a covariance, or null if either is absent. */
export function axisCorrelation(
	covariance: Covariance,
	first: CoefficientAxis,
	second: CoefficientAxis
): number | null {
	const i = covariance.axes.indexOf(first);
	const j = covariance.axes.indexOf(second);
	if (i < 0 || j < 0) return null;
	return covariance.matrix[i][j] / Math.sqrt(covariance.matrix[i][i] * covariance.matrix[j][j]);
}
