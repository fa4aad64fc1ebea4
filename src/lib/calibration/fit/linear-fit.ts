import { CalibrationInputError, type CoefficientAxis, type ValidityRange } from '../types';
import { bootstrapParameters } from './bootstrap';
import { clipIteratively } from './clipping';
import { RankDeficientDesignError, solveLeastSquares } from './least-squares';
import {
	adjustedResponse,
	closedFormSolver,
	designRow,
	fitAtIntrinsicVariance,
	fitIntrinsicScatter,
	gaussianLogLikelihood,
	intrinsicScatterError,
	predict,
	prepareFitData,
	restrictedLogLikelihood,
	qrSolver,
	starVariance,
	type FitData,
	type FitModel,
	type ModelFit,
	type ScatterFit,
	type WeightedSolver
} from './model';
import { weightedCovarianceFactor } from './fit-quality';
import type {
	BootstrapSummary,
	CalibratorPoint,
	LinearFitOptions,
	LinearFitResult,
	WeightedCovarianceScaling
} from './types';
import { minimumStars, validateFitInput } from './validation';

interface SubsetFit {
	indices: number[];
	fit: ModelFit;
	scatter: ScatterFit | null;
	intrinsicVariance: number;
	/** Σ rᵢ² over the subset, unweighted. */
	residualSumOfSquares: number;
	/** Σ rᵢ²/vᵢ, or null when some vᵢ = 0. */
	chiSquare: number | null;
	degreesOfFreedom: number;
}

function degenerateDesign(): CalibrationInputError {
	return new CalibrationInputError([
		{
			star: null,
			field: 'logPeriod',
			message: 'the calibrators do not constrain every coefficient (e.g. all share one period or one [Fe/H])'
		}
	]);
}

function fitSubset(data: FitData, model: FitModel, indices: number[], solver: WeightedSolver): SubsetFit {
	let scatter: ScatterFit | null = null;
	let fit: ModelFit | null;
	if (model.method === 'ml_scatter') {
		// σ_int is searched with the closed-form solver (fast, ample for locating a maximum); the
		// coefficients at the adopted σ_int come from the QR solver like every other fit.
		const search = fitIntrinsicScatter(data, model, indices, closedFormSolver, model.scatterEstimator);
		fit = search ? fitAtIntrinsicVariance(data, model, indices, search.intrinsicScatter ** 2, solver) : null;
		scatter =
			search && fit
				? {
						...search,
						fit,
						logLikelihood:
							model.scatterEstimator === 'reml'
								? restrictedLogLikelihood(data, model, fit, indices)
								: gaussianLogLikelihood(data, fit, indices)
					}
				: null;
	} else {
		fit = fitAtIntrinsicVariance(data, model, indices, 0, solver);
	}
	if (!fit) throw degenerateDesign();
	const intrinsicVariance = scatter ? scatter.intrinsicScatter ** 2 : 0;
	let residualSumOfSquares = 0;
	let chiSquare: number | null = 0;
	for (const i of indices) {
		const residual = data.y[i] - predict(data, fit, i);
		residualSumOfSquares += residual * residual;
		const variance = starVariance(data, fit.slope, fit.metallicityTerm, intrinsicVariance, i);
		chiSquare = chiSquare !== null && variance > 0 ? chiSquare + (residual * residual) / variance : null;
	}
	return {
		indices,
		fit,
		scatter,
		intrinsicVariance,
		residualSumOfSquares,
		chiSquare,
		degreesOfFreedom: indices.length - model.axes.length - (scatter ? 1 : 0)
	};
}

const reducedChiSquareOf = (subset: SubsetFit) =>
	subset.chiSquare === null || subset.degreesOfFreedom <= 0 ? null : subset.chiSquare / subset.degreesOfFreedom;

/**
 * Residual of star i divided by its error under the fit: the residual SD √(Σr²/dof) for ols;
 * √vᵢ for wls (times √(χ²/dof) when the covariance is scaled by it); √(vᵢ) with σ_int for ml_scatter.
 */
function standardizedResidual(
	data: FitData,
	model: FitModel,
	subset: SubsetFit,
	scaling: WeightedCovarianceScaling,
	i: number
): number {
	const residual = data.y[i] - predict(data, subset.fit, i);
	if (model.method === 'ols') {
		const sd = Math.sqrt(subset.residualSumOfSquares / subset.degreesOfFreedom);
		return sd > 0 ? residual / sd : 0;
	}
	let variance = starVariance(data, subset.fit.slope, subset.fit.metallicityTerm, subset.intrinsicVariance, i);
	variance *= weightedCovarianceFactor(scaling, reducedChiSquareOf(subset));
	return variance > 0 ? residual / Math.sqrt(variance) : 0;
}

/**
 * Fits the Leavitt law M = a + b(log10 P − p0) [+ γ([Fe/H] − f0)] to calibrators whose absolute
 * magnitudes are already known.
 *
 * - `ols`: unit weights; covariance s²(XᵀX)⁻¹ with s² = Σr²/dof.
 * - `wls`: weights 1/vᵢ, vᵢ = σ_M,i² + b²σ_logP,i² (+ γ²σ_[Fe/H],i²); covariance max(1, χ²/dof)·(XᵀWX)⁻¹
 *   by default, (XᵀWX)⁻¹ with `weightedCovariance: 'absolute'`, (χ²/dof)·(XᵀWX)⁻¹ with `'reduced_chi_square'`.
 * - `ml_scatter`: as wls with σ_int² added to every vᵢ, σ_int maximising the Gaussian likelihood;
 *   covariance (XᵀWX)⁻¹ at that σ_int, σ_int's error from the profile likelihood.
 * - `fixedSlope`: zero point (and γ) only; `fixedZeroPoint`: regression through (p0, a).
 *
 * Optional σ-clipping runs first; the bootstrap then resamples the kept stars.
 * Throws CalibrationInputError for invalid input. Same input, same bits.
 */
export function fitLinearRelation(points: readonly CalibratorPoint[], options: LinearFitOptions): LinearFitResult {
	validateFitInput(points, options);
	const pivotLogPeriod = options.pivotLogPeriod ?? 1;
	const pivotFeh = options.pivotFeh ?? 0;
	const withMetallicity = options.metallicityTerm ?? false;
	const fixedZeroPoint = options.fixedZeroPoint ?? null;
	const fixedSlope = options.fixedSlope ?? null;
	const axes: CoefficientAxis[] = [];
	if (fixedZeroPoint === null) axes.push('zero_point');
	if (fixedSlope === null) axes.push('slope');
	if (withMetallicity) axes.push('metallicity_term');
	const model: FitModel = {
		method: options.method,
		axes,
		fixedZeroPoint,
		fixedSlope,
		scatterEstimator: options.intrinsicScatterEstimator ?? 'ml'
	};
	const scaling: WeightedCovarianceScaling =
		options.weightedCovariance ?? (options.method === 'wls' ? 'reduced_chi_square_above_one' : 'absolute');

	const data = prepareFitData(points, pivotLogPeriod, pivotFeh, withMetallicity);
	const clipped = clipIteratively(
		data.stars,
		options.clipping ?? null,
		minimumStars(options),
		(kept) => fitSubset(data, model, kept, qrSolver),
		(subset, i) => standardizedResidual(data, model, subset, scaling, i)
	);
	const subset = clipped.state;
	const { fit, degreesOfFreedom } = subset;

	// The final solve again, for (XᵀWX)⁻¹ at the adopted weights.
	let solution;
	try {
		solution = solveLeastSquares({
			design: subset.indices.map((i) => designRow(data, model, i)),
			response: subset.indices.map((i) => adjustedResponse(data, model, i)),
			weights: Array.from(fit.weights)
		});
	} catch (error) {
		if (error instanceof RankDeficientDesignError) throw degenerateDesign();
		throw error;
	}
	const residualVariance = subset.residualSumOfSquares / degreesOfFreedom;
	const reducedChiSquare = reducedChiSquareOf(subset);
	const weightedFactor = options.method === 'ols' ? 1 : weightedCovarianceFactor(scaling, reducedChiSquare);
	const covarianceFactor = options.method === 'ols' ? residualVariance : weightedFactor;
	const matrix = solution.unscaledCovariance.map((row) => row.map((value) => value * covarianceFactor));
	const errorOf = (axis: CoefficientAxis) => {
		const j = axes.indexOf(axis);
		return j < 0 ? null : Math.sqrt(matrix[j][j]);
	};

	const keptSet = new Set(clipped.kept);
	const residuals = data.stars.map((star, i) => ({
		star,
		residual: data.y[i] - predict(data, fit, i),
		standardizedResidual: standardizedResidual(data, model, subset, scaling, i),
		used: keptSet.has(i)
	}));

	const bootstrap = options.bootstrap
		? bootstrapWholeProcedure(data, model, options, scaling, options.bootstrap)
		: null;

	return {
		method: options.method,
		pivotLogPeriod,
		pivotFeh,
		coefficients: {
			zeroPoint: fit.zeroPoint,
			slope: fit.slope,
			metallicityTerm: withMetallicity ? fit.metallicityTerm : null
		},
		fixed: { zeroPoint: fixedZeroPoint !== null, slope: fixedSlope !== null },
		covariance: { axes: [...axes], matrix },
		covarianceScaling: options.method === 'ols' ? 'residual_variance' : scaling,
		covarianceScaled: options.method !== 'ols' && weightedFactor !== 1,
		errors: {
			zeroPoint: errorOf('zero_point'),
			slope: errorOf('slope'),
			metallicityTerm: errorOf('metallicity_term')
		},
		intrinsicScatter: subset.scatter
			? { value: subset.scatter.intrinsicScatter, error: intrinsicScatterError(subset.scatter) }
			: null,
		intrinsicScatterEstimator: subset.scatter ? (model.scatterEstimator ?? 'ml') : null,
		chiSquare: subset.chiSquare,
		degreesOfFreedom,
		reducedChiSquare,
		rSquared: coefficientOfDetermination(data, model, subset),
		residualSd: Math.sqrt(residualVariance),
		logLikelihood: subset.scatter ? subset.scatter.logLikelihood : null,
		starsTotal: points.length,
		starsUsed: clipped.kept.length,
		validity: spannedRange(points, clipped.kept, withMetallicity),
		residuals,
		rejected: clipped.rejected,
		clippingRounds: clipped.rounds,
		bootstrap
	};
}

function spannedRange(points: readonly CalibratorPoint[], kept: number[], withMetallicity: boolean): ValidityRange {
	const range = (values: number[]) =>
		values.reduce(([lo, hi], value) => [Math.min(lo, value), Math.max(hi, value)], [Infinity, -Infinity]);
	const [logPeriodMin, logPeriodMax] = range(kept.map((i) => points[i].logPeriod));
	const [fehMin, fehMax] = withMetallicity ? range(kept.map((i) => points[i].feh as number)) : [null, null];
	return { logPeriodMin, logPeriodMax, fehMin, fehMax };
}

/**
 * The bootstrap replicates the whole estimate, clipping included (Efron & Tibshirani 1993, An
 * Introduction to the Bootstrap, §6.2: the statistic is recomputed on every resample): each draw of
 * n stars from all n is σ-clipped afresh before it is fitted, so a star's chance of being rejected is
 * part of the spread. Without clipping each draw is fitted as it is.
 */
function bootstrapWholeProcedure(
	data: FitData,
	model: FitModel,
	options: LinearFitOptions,
	scaling: WeightedCovarianceScaling,
	bootstrap: NonNullable<LinearFitOptions['bootstrap']>
): BootstrapSummary {
	const everyStar = data.stars.map((_, i) => i);
	const clipping = options.clipping ?? null;
	const withScatter = model.method === 'ml_scatter';
	if (!clipping) {
		const summary = bootstrapParameters(everyStar, model.axes, withScatter, bootstrap, (indices) =>
			refitResample(data, model, indices, closedFormSolver)
		);
		return { ...summary, reclipped: false, meanRejectedPerResample: null };
	}
	const minimumKept = minimumStars(options);
	let rejectedTotal = 0;
	let clippedResamples = 0;
	const summary = bootstrapParameters(everyStar, model.axes, withScatter, bootstrap, (indices) => {
		const positions = Array.from(indices, (_, k) => String(k));
		try {
			const outcome = clipIteratively(
				positions,
				clipping,
				minimumKept,
				(kept) =>
					fitSubset(
						data,
						model,
						kept.map((k) => indices[k]),
						closedFormSolver
					),
				(subset, k) => standardizedResidual(data, model, subset, scaling, indices[k])
			);
			rejectedTotal += outcome.rejected.length;
			clippedResamples++;
			const { scatter, fit } = outcome.state;
			return scatter ? [...fit.free, scatter.intrinsicScatter] : fit.free;
		} catch (error) {
			if (error instanceof CalibrationInputError) return null;
			throw error;
		}
	});
	return {
		...summary,
		reclipped: true,
		meanRejectedPerResample: clippedResamples > 0 ? rejectedTotal / clippedResamples : null
	};
}

function refitResample(data: FitData, model: FitModel, indices: Int32Array, solver: WeightedSolver): number[] | null {
	if (model.method === 'ml_scatter') {
		const scatter = fitIntrinsicScatter(data, model, indices, solver, model.scatterEstimator);
		return scatter ? [...scatter.fit.free, scatter.intrinsicScatter] : null;
	}
	return fitAtIntrinsicVariance(data, model, indices, 0, solver)?.free ?? null;
}

/**
 * R² = 1 − Σwᵢrᵢ² / Σwᵢ(yᵢ − ȳ_w)² with the fit's weights (1 for ols); for a fixed zero point the
 * uncentred form 1 − Σwᵢrᵢ² / Σwᵢ(yᵢ − a)², as NIST StRD reports for its no-intercept models.
 * Not defined here for a fixed slope or ml_scatter (null).
 */
function coefficientOfDetermination(data: FitData, model: FitModel, subset: SubsetFit): number | null {
	if (model.fixedSlope !== null || model.method === 'ml_scatter') return null;
	const { indices, fit } = subset;
	let sumW = 0;
	let sumWY = 0;
	for (let k = 0; k < indices.length; k++) {
		sumW += fit.weights[k];
		sumWY += fit.weights[k] * data.y[indices[k]];
	}
	const centre = model.fixedZeroPoint ?? sumWY / sumW;
	let residualSum = 0;
	let totalSum = 0;
	for (let k = 0; k < indices.length; k++) {
		const i = indices[k];
		residualSum += fit.weights[k] * (data.y[i] - predict(data, fit, i)) ** 2;
		totalSum += fit.weights[k] * (data.y[i] - centre) ** 2;
	}
	return totalSum > 0 ? 1 - residualSum / totalSum : null;
}
