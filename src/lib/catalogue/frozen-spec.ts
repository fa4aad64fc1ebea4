/**
 * The fit spec a frozen version records, back in the engine's terms, so the same calibrator revision
 * can be fitted again: for the PL diagram (which stars were used and which rejected) and to check
 * that the frozen numbers are reproduced.
 */
import type { RefitSpec } from '../calibration/refit';
import type { RelationVersionContent } from '../calibration/frozen-content';

export function refitSpecFromContent(
	content: RelationVersionContent,
	options: { withBootstrap: boolean } = { withBootstrap: true }
): RefitSpec {
	const { fit } = content;
	return {
		bandId: content.band,
		population: content.population,
		anchor: fit.anchor,
		form: content.form,
		method: fit.method,
		pivotLogPeriod: content.pivot_log_period,
		pivotFeh: content.pivot_feh,
		periodFilter: { logPeriodMin: fit.period_filter.log_period_min, logPeriodMax: fit.period_filter.log_period_max },
		fundamentalise: fit.fundamentalised,
		fixedSlope: fit.fixed_slope,
		fixedZeroPoint: fit.fixed_zero_point,
		clipping: fit.clipping ? { sigma: fit.clipping.sigma, maxIterations: fit.clipping.max_iterations } : null,
		extinctionLaw: fit.extinction_law,
		rV: fit.r_v,
		parallaxOffset: fit.parallax_offset,
		bootstrap:
			options.withBootstrap && fit.bootstrap
				? { resamples: fit.bootstrap.resamples, seed: fit.bootstrap.seed, level: fit.bootstrap.level }
				: null,
		weightedCovariance: fit.weighted_covariance ?? 'absolute',
		assumedIntrinsicScatter: fit.assumed_intrinsic_scatter
	};
}

/** 1σ of each coefficient: the square root of the covariance diagonal, by axis name. */
export function coefficientErrors(covariance: RelationVersionContent['covariance']): Record<string, number> {
	return Object.fromEntries(covariance.axes.map((axis, i) => [axis, Math.sqrt(covariance.matrix[i][i])]));
}
