import type { IntrinsicScatterEstimator } from './model';
import type { Coefficients, Covariance, CoefficientAxis, Measured, ValidityRange } from '../types';

/** One calibrator, with its absolute magnitude already computed by the caller. */
export interface CalibratorPoint {
	star: string;
	/** log10 of the period in days. */
	logPeriod: number;
	/** Absolute magnitude M (mag). */
	absMag: number;
	/** 1σ error of absMag (mag). */
	absMagErr: number;
	/** 1σ error of log10 P (dex); enters the variance of ml_scatter and wls fits as b²σ². */
	logPeriodErr?: number | null;
	/** [Fe/H] (dex); required when the fit has a metallicity term. */
	feh?: number | null;
	/** 1σ error of [Fe/H]; enters the variance as γ²σ² when the fit has a metallicity term. */
	fehErr?: number | null;
}

/** Stable method ids. */
export const FIT_METHODS = ['ols', 'wls', 'ml_scatter'] as const;
export type FitMethod = (typeof FIT_METHODS)[number];

/** Every method a refit may use: the linear fits plus the fit in parallax space. */
export const REFIT_METHODS = [...FIT_METHODS, 'parallax_space'] as const;
export type RefitMethod = (typeof REFIT_METHODS)[number];

export interface ClippingOptions {
	/** Reject a star when |standardized residual| exceeds this. */
	sigma: number;
	/** Upper bound on the number of reject-and-refit rounds. */
	maxIterations: number;
}

export interface BootstrapOptions {
	resamples: number;
	/** Integer in [0, 2³²). */
	seed: number;
	/** Central probability of the percentile intervals; default 0.68. */
	level?: number;
}

/**
 * How a weighted fit turns (XᵀWX)⁻¹ into the coefficient covariance:
 * `reduced_chi_square_above_one` multiplies it by χ²/dof when χ²/dof > 1 and leaves it alone otherwise,
 * so scatter beyond the stated errors widens the error bars but a lucky fit never narrows them (the
 * default for wls; common practice);
 * `absolute` takes the per-star errors at face value (the default for ml_scatter, whose σ_int already
 * absorbs the excess scatter; for wls only when asked for);
 * `reduced_chi_square` always multiplies it by χ²/dof, as when the errors are only known up to a factor.
 * Ordinary least squares always uses the residual variance.
 */
export const WEIGHTED_COVARIANCE_SCALINGS = ['reduced_chi_square_above_one', 'absolute', 'reduced_chi_square'] as const;
export type WeightedCovarianceScaling = (typeof WEIGHTED_COVARIANCE_SCALINGS)[number];

export interface LinearFitOptions {
	method: FitMethod;
	/** p0; default 1 (P = 10 d). */
	pivotLogPeriod?: number;
	/** f0; default 0. */
	pivotFeh?: number;
	metallicityTerm?: boolean;
	/** Slope adopted from another relation: only the zero point (and γ) are fitted. */
	fixedSlope?: number | null;
	/** Zero point held fixed: regression through the point (p0, a). */
	fixedZeroPoint?: number | null;
	clipping?: ClippingOptions | null;
	bootstrap?: BootstrapOptions | null;
	/** Default `reduced_chi_square_above_one` for wls, `absolute` for ml_scatter. */
	weightedCovariance?: WeightedCovarianceScaling;
	/** How ml_scatter estimates σ_int; default `ml` (see IntrinsicScatterEstimator). */
	intrinsicScatterEstimator?: IntrinsicScatterEstimator;
}

export interface StarResidual {
	star: string;
	/** M − M_fit (mag). */
	residual: number;
	/** residual divided by the star's total error under the fit's method (see `standardizedResidual`). */
	standardizedResidual: number;
	/** False when σ-clipping rejected the star. */
	used: boolean;
}

export interface RejectedStar {
	star: string;
	standardizedResidual: number;
	/** Clipping round (1-based) in which the star was rejected. */
	iteration: number;
	reason: string;
}

export interface AxisInterval {
	axis: CoefficientAxis | 'intrinsic_scatter';
	lower: number;
	upper: number;
}

export interface BootstrapSummary {
	generator: 'xoroshiro128plus';
	seed: number;
	resamples: number;
	level: number;
	/** Resamples whose design was degenerate (e.g. every draw the same period); left out of the summary. */
	failedResamples: number;
	/** Percentile intervals, one per free axis (and σ_int for ml_scatter). */
	intervals: AxisInterval[];
	/** Sample covariance of the resampled coefficients over the free axes. */
	covariance: Covariance;
	/** True when every resample was σ-clipped afresh before it was fitted. */
	reclipped: boolean;
	/** Stars the clipping rejected per resample, on average (null without clipping). */
	meanRejectedPerResample: number | null;
}

export interface LinearFitResult {
	method: FitMethod;
	pivotLogPeriod: number;
	pivotFeh: number;
	coefficients: Coefficients;
	/** Which coefficients were held fixed rather than fitted. */
	fixed: { zeroPoint: boolean; slope: boolean };
	/** Covariance of the fitted coefficients only (fixed ones carry no axis). */
	covariance: Covariance;
	/** How `covariance` was scaled: the rule asked for. */
	covarianceScaling: 'residual_variance' | WeightedCovarianceScaling;
	/** Whether `covariance` was in fact multiplied by χ²/dof (false for ols, which uses the residual variance). */
	covarianceScaled: boolean;
	/** 1σ errors of the coefficients; null for a fixed or absent coefficient. */
	errors: { zeroPoint: number | null; slope: number | null; metallicityTerm: number | null };
	/** σ_int with its error for ml_scatter; null otherwise. */
	intrinsicScatter: Measured | null;
	/** How σ_int was estimated (ml_scatter only; null otherwise). */
	intrinsicScatterEstimator: IntrinsicScatterEstimator | null;
	/** Σ rᵢ²/vᵢ with vᵢ the star's total variance; null when some vᵢ is 0. */
	chiSquare: number | null;
	degreesOfFreedom: number;
	reducedChiSquare: number | null;
	/** Coefficient of determination (weighted for wls); uncentred for a fixed zero point; null for a fixed slope and ml_scatter. */
	rSquared: number | null;
	/** √(Σ rᵢ²/dof), unweighted (mag). */
	residualSd: number;
	/** Maximised ln L, or the restricted ln L with the `reml` estimator (ml_scatter only). */
	logLikelihood: number | null;
	starsTotal: number;
	starsUsed: number;
	/** log P (and [Fe/H], with a metallicity term) spanned by the stars used. */
	validity: ValidityRange;
	residuals: StarResidual[];
	rejected: RejectedStar[];
	/** Clipping rounds that were run (0 without clipping). */
	clippingRounds: number;
	bootstrap: BootstrapSummary | null;
}
