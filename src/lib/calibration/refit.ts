/**
 * One refit, end to end: calibrator rows + a fit spec → prepared calibrators → the chosen fit → a result
 * that says everything a reviewer needs (coefficients, covariance, σ_int, stars used and rejected,
 * residuals, warnings) and the snake_case `fit` block that a frozen version records.
 */
import { prepareCalibrators, type AnchorKind, type PreparedCalibrators } from './calibrators';
import { fitLinearRelation } from './fit/index';
import type { IntrinsicScatterEstimator } from './fit/model';
import {
	REFIT_METHODS,
	type RefitMethod,
	type BootstrapSummary,
	type ClippingOptions,
	type WeightedCovarianceScaling
} from './fit/types';
import { ENGINE_VERSION } from './engine-version';
import { fitQualityOf, fitQualityWarning, type FitQuality } from './fit/fit-quality';
import {
	engineMajor,
	parseRelationVersionContent,
	type RELATION_FORMS,
	type RelationVersionContent
} from './frozen-content';
import { fitParallaxSpace } from './parallax-fit';
import { getBand } from './bands';
import { frozenSystematicTerm, type CalibrationSystematic } from './systematics';
import { calibrationSystematics, type SystematicsContext } from './refit-systematics';
import {
	CalibrationInputError,
	type CalibrationWarning,
	type Coefficients,
	type Covariance,
	type ExtinctionLawId,
	type InputIssue,
	type MagnitudeSystem,
	type PopulationId,
	type ValidityRange
} from './types';
import type { CalibratorRow } from './calibrators';
import type { SharedSystematic, ExcludedCalibrator } from './calibrators';

export type RelationForm = (typeof RELATION_FORMS)[number];

export interface RefitSpec {
	bandId: string;
	population: PopulationId;
	anchor: AnchorKind;
	form: RelationForm;
	method: RefitMethod;
	pivotLogPeriod: number;
	pivotFeh: number;
	periodFilter: { logPeriodMin: number | null; logPeriodMax: number | null };
	/** Fundamentalise first-overtone classical Cepheids and fit them with the fundamental-mode stars. */
	fundamentalise: boolean;
	fixedSlope: number | null;
	fixedZeroPoint: number | null;
	clipping: ClippingOptions | null;
	extinctionLaw: ExtinctionLawId | null;
	rV: number | null;
	/** Parallax zero point: adopted (given) or fitted as a free offset (parallax_space only). */
	parallaxOffset: { mode: 'given' | 'fitted'; value: number; error: number } | null;
	bootstrap: { resamples: number; seed: number; level: number } | null;
	weightedCovariance: WeightedCovarianceScaling;
	/** σ_int held fixed inside the parallax-space fit (it does not estimate σ_int); null otherwise. */
	assumedIntrinsicScatter: number | null;
	/** How ml_scatter estimates σ_int; absent or null means `ml`, the only estimator of engine 1. */
	intrinsicScatterEstimator?: IntrinsicScatterEstimator | null;
	/** 1σ error of an adopted fixed slope: a systematic shared by every star. */
	fixedSlopeError?: number | null;
	/** R of the Wesenheit band when the curator chose one other than the catalogue's, with the reason. */
	wesenheitRatio?: { value: number; reason: string } | null;
}

export interface RefitResidual {
	star: string;
	logPeriod: number;
	/** Absolute magnitude from the star's own distance; null when its parallax cannot be inverted. */
	absMag: number | null;
	absMagErr: number | null;
	/** Magnitude the relation predicts at the star's period (and [Fe/H]). */
	predictedMag: number;
	/** absMag − predictedMag; null when absMag is null. */
	residual: number | null;
	standardizedResidual: number;
	used: boolean;
}

export interface RefitRejection {
	star: string;
	reason: 'sigma_clip';
	standardizedResidual: number;
	detail: string;
}

export interface RefitResult {
	spec: RefitSpec;
	coefficients: Coefficients;
	errors: {
		zeroPoint: number | null;
		slope: number | null;
		metallicityTerm: number | null;
		parallaxOffset: number | null;
	};
	parallaxOffsetMas: number | null;
	covariance: Covariance;
	/** σ_int: the ML estimate, the scatter beyond the stated errors (wls), the residual SD (ols), or the assumed value. */
	intrinsicScatter: number;
	intrinsicScatterError: number | null;
	intrinsicScatterSource: 'maximum_likelihood' | 'excess_scatter' | 'residual_sd' | 'assumed';
	nTotal: number;
	nUsed: number;
	rejected: RefitRejection[];
	excluded: ExcludedCalibrator[];
	residuals: RefitResidual[];
	validity: ValidityRange;
	chiSquare: number | null;
	degreesOfFreedom: number;
	reducedChiSquare: number | null;
	systematics: SharedSystematic[];
	/** Shared terms with their effect on the coefficients, as a version freezes them. */
	calibrationSystematics: CalibrationSystematic[];
	fitQuality: FitQuality;
	/** R of the Wesenheit band the magnitudes were formed with; null for a single band. */
	wesenheitRatio: number | null;
	bootstrap: BootstrapSummary | null;
	warnings: CalibrationWarning[];
}

function specIssues(spec: RefitSpec): InputIssue[] {
	const issues: InputIssue[] = [];
	const issue = (field: string, message: string) => issues.push({ star: null, field, message });
	if (!(REFIT_METHODS as readonly string[]).includes(spec.method)) issue('method', `unknown method '${spec.method}'`);
	if (spec.method === 'parallax_space') {
		if (spec.anchor !== 'parallax') issue('method', 'a parallax-space fit needs a parallax anchor');
		if (spec.clipping) issue('clipping', 'σ-clipping is not offered for parallax-space fits');
		if (spec.bootstrap) issue('bootstrap', 'bootstrap is not offered for parallax-space fits');
		if (spec.fixedSlope !== null || spec.fixedZeroPoint !== null) {
			issue('fixedSlope', 'fixed coefficients are not offered for parallax-space fits');
		}
		if (spec.assumedIntrinsicScatter === null || !(spec.assumedIntrinsicScatter >= 0)) {
			issue('assumedIntrinsicScatter', 'a parallax-space fit needs an assumed σ_int ≥ 0');
		}
	} else {
		if (spec.parallaxOffset?.mode === 'fitted')
			issue('parallaxOffset', 'a fitted parallax offset needs the parallax-space method');
		if (spec.assumedIntrinsicScatter !== null)
			issue('assumedIntrinsicScatter', 'only parallax-space fits take an assumed σ_int');
	}
	if (spec.parallaxOffset && spec.anchor !== 'parallax')
		issue('parallaxOffset', 'only a parallax anchor has a parallax offset');
	const fixedSlopeError = spec.fixedSlopeError ?? null;
	if (fixedSlopeError !== null) {
		if (spec.fixedSlope === null) issue('fixedSlopeError', 'an error needs the fixed slope it belongs to');
		else if (!(Number.isFinite(fixedSlopeError) && fixedSlopeError >= 0)) issue('fixedSlopeError', 'must be ≥ 0');
	}
	if (spec.wesenheitRatio) {
		const band = getBand(spec.bandId);
		if (band.kind !== 'wesenheit')
			issue('wesenheitRatio', `${spec.bandId} is a single band; only a Wesenheit band has R`);
		if (!(Number.isFinite(spec.wesenheitRatio.value) && spec.wesenheitRatio.value > 0))
			issue('wesenheitRatio.value', 'must be a positive number');
		if (spec.wesenheitRatio.reason.trim() === '')
			issue(
				'wesenheitRatio.reason',
				'say why this R rather than the catalogue value (e.g. the law and R_V it comes from)'
			);
	}
	if (spec.fundamentalise && spec.population !== 'classical_fundamental') {
		issue('fundamentalise', 'only a classical fundamental-mode relation can take fundamentalised overtone periods');
	}
	const { logPeriodMin, logPeriodMax } = spec.periodFilter;
	if (logPeriodMin !== null && logPeriodMax !== null && logPeriodMin > logPeriodMax) {
		issue('periodFilter', 'log_period_min must not exceed log_period_max');
	}
	return issues;
}

export function prepare(rows: readonly CalibratorRow[], spec: RefitSpec): PreparedCalibrators {
	const { logPeriodMin, logPeriodMax } = spec.periodFilter;
	const hasRange = logPeriodMin !== null || logPeriodMax !== null;
	return prepareCalibrators(rows, {
		bandId: spec.bandId,
		anchor: spec.anchor,
		parallaxZeroPoint: spec.parallaxOffset
			? { value: spec.parallaxOffset.value, error: spec.parallaxOffset.error }
			: undefined,
		parallaxZeroPointFitted: spec.parallaxOffset?.mode === 'fitted',
		wesenheitRatio: spec.wesenheitRatio?.value ?? null,
		nonPositiveParallax: spec.method === 'parallax_space' ? 'parallax_space_only' : 'refuse',
		extinctionLaw: spec.extinctionLaw,
		rV: spec.rV ?? undefined,
		populations: spec.fundamentalise ? [spec.population, 'classical_first_overtone'] : [spec.population],
		logPeriodRange: hasRange ? { min: logPeriodMin ?? -Infinity, max: logPeriodMax ?? Infinity } : null,
		fundamentalise: spec.fundamentalise
	});
}

const predicted = (c: Coefficients, spec: RefitSpec, logPeriod: number, feh: number | null | undefined) =>
	c.zeroPoint +
	c.slope * (logPeriod - spec.pivotLogPeriod) +
	(c.metallicityTerm ?? 0) * ((feh ?? spec.pivotFeh) - spec.pivotFeh);

/**
 * Runs the refit; throws CalibrationInputError naming every problem with the spec or the rows. The result
 * carries the fit's quality (χ²/dof against 1 + 3·√(2/dof), warned about when exceeded), the R of its
 * Wesenheit band, and its shared systematics with their effect on each coefficient.
 */
export function runRefit(rows: readonly CalibratorRow[], spec: RefitSpec): RefitResult {
	const fitted = fitRefit(rows, spec);
	const fitQuality = fitQualityOf(fitted.reducedChiSquare, fitted.degreesOfFreedom, fitted.covarianceScaled);
	const band = getBand(spec.bandId);
	const wesenheitRatio = band.kind === 'wesenheit' ? (spec.wesenheitRatio?.value ?? band.ratio) : null;
	const context: SystematicsContext = { rows, spec, fitted };
	const { terms, warnings: systematicWarnings } = calibrationSystematics(context);
	const qualityWarning = fitQualityWarning(fitQuality);
	const ratioWarning =
		band.kind === 'wesenheit' && spec.wesenheitRatio && spec.wesenheitRatio.value !== band.ratio
			? [
					{
						code: 'wesenheit_ratio_chosen',
						message: `${band.id} formed with R = ${spec.wesenheitRatio.value} instead of the catalogue's ${band.ratio}: ${spec.wesenheitRatio.reason}`,
						field: 'wesenheit_ratio',
						details: {
							ratio: spec.wesenheitRatio.value,
							catalogueRatio: band.ratio,
							reason: spec.wesenheitRatio.reason
						}
					}
				]
			: [];
	const { covarianceScaled: _scaled, ...result } = fitted;
	return {
		...result,
		calibrationSystematics: terms,
		fitQuality,
		wesenheitRatio,
		warnings: [...fitted.warnings, ...(qualityWarning ? [qualityWarning] : []), ...ratioWarning, ...systematicWarnings]
	};
}

/** A refit before its quality and systematics are judged, with what judging them needs. */
export type FittedRefit = Omit<RefitResult, 'calibrationSystematics' | 'fitQuality' | 'wesenheitRatio'> & {
	covarianceScaled: boolean;
	/** ∂θ/∂ZP per mas along `covariance.axes` (parallax-space fits only). */
	zeroPointSensitivity: number[] | null;
};

function fitRefit(rows: readonly CalibratorRow[], spec: RefitSpec): FittedRefit {
	const issues = specIssues(spec);
	if (issues.length > 0) throw new CalibrationInputError(issues);
	const prepared = prepare(rows, spec);
	const metallicityTerm = spec.form === 'period_luminosity_metallicity';
	const common = {
		spec,
		nTotal: rows.length,
		excluded: prepared.excluded,
		systematics: prepared.systematics
	};
	if (spec.method === 'parallax_space') {
		const fit = fitParallaxSpace(prepared.parallaxPoints, {
			pivotLogPeriod: spec.pivotLogPeriod,
			pivotFeh: spec.pivotFeh,
			metallicityTerm,
			parallaxZeroPoint: spec.parallaxOffset
				? { value: spec.parallaxOffset.value, error: spec.parallaxOffset.error }
				: undefined,
			fitParallaxOffset: spec.parallaxOffset?.mode === 'fitted',
			intrinsicScatter: spec.assumedIntrinsicScatter ?? 0
		});
		const byStar = new Map(fit.residuals.map((residual) => [residual.star, residual]));
		const used = prepared.stars.filter((star) => byStar.has(star.star));
		const logPeriods = used.map((star) => star.logPeriod);
		const fehs = prepared.parallaxPoints
			.filter((p) => byStar.has(p.star))
			.map((p) => p.feh)
			.filter((f): f is number => typeof f === 'number');
		return {
			...common,
			coefficients: fit.coefficients,
			errors: fit.errors,
			parallaxOffsetMas: fit.parallaxOffsetMas,
			covariance: fit.covariance,
			intrinsicScatter: spec.assumedIntrinsicScatter ?? 0,
			intrinsicScatterError: null,
			intrinsicScatterSource: 'assumed',
			nUsed: fit.starsUsed,
			rejected: [],
			residuals: used.map((star) => {
				const feh = prepared.parallaxPoints.find((p) => p.star === star.star)?.feh;
				const predictedMag = predicted(fit.coefficients, spec, star.logPeriod, feh);
				return {
					star: star.star,
					logPeriod: star.logPeriod,
					absMag: star.absMag,
					absMagErr: star.absMagErr,
					predictedMag,
					residual: star.absMag === null ? null : star.absMag - predictedMag,
					standardizedResidual: byStar.get(star.star)!.normalizedResidual,
					used: true
				};
			}),
			validity: {
				logPeriodMin: Math.min(...logPeriods),
				logPeriodMax: Math.max(...logPeriods),
				fehMin: metallicityTerm && fehs.length > 0 ? Math.min(...fehs) : null,
				fehMax: metallicityTerm && fehs.length > 0 ? Math.max(...fehs) : null
			},
			chiSquare: fit.chiSquare,
			degreesOfFreedom: fit.degreesOfFreedom,
			reducedChiSquare: fit.reducedChiSquare,
			covarianceScaled: false,
			zeroPointSensitivity: fit.zeroPointSensitivity,
			bootstrap: null,
			warnings: prepared.warnings
		};
	}

	const fit = fitLinearRelation(prepared.points, {
		method: spec.method,
		pivotLogPeriod: spec.pivotLogPeriod,
		pivotFeh: spec.pivotFeh,
		metallicityTerm,
		fixedSlope: spec.fixedSlope,
		fixedZeroPoint: spec.fixedZeroPoint,
		clipping: spec.clipping,
		bootstrap: spec.bootstrap,
		weightedCovariance: spec.weightedCovariance,
		intrinsicScatterEstimator: spec.intrinsicScatterEstimator ?? 'ml'
	});
	const pointByStar = new Map(prepared.points.map((point) => [point.star, point]));
	const scatter = intrinsicScatterOf(spec, fit, new Map(prepared.points.map((point) => [point.star, point.absMagErr])));
	return {
		...common,
		coefficients: fit.coefficients,
		errors: { ...fit.errors, parallaxOffset: null },
		parallaxOffsetMas: null,
		covariance: fit.covariance,
		...scatter,
		nUsed: fit.starsUsed,
		rejected: fit.rejected.map((rejection) => ({
			star: rejection.star,
			reason: 'sigma_clip',
			standardizedResidual: rejection.standardizedResidual,
			detail: rejection.reason
		})),
		residuals: fit.residuals.map((residual) => {
			const point = pointByStar.get(residual.star)!;
			return {
				star: residual.star,
				logPeriod: point.logPeriod,
				absMag: point.absMag,
				absMagErr: point.absMagErr,
				predictedMag: point.absMag - residual.residual,
				residual: residual.residual,
				standardizedResidual: residual.standardizedResidual,
				used: residual.used
			};
		}),
		validity: fit.validity,
		chiSquare: fit.chiSquare,
		degreesOfFreedom: fit.degreesOfFreedom,
		reducedChiSquare: fit.reducedChiSquare,
		covarianceScaled: fit.covarianceScaled,
		zeroPointSensitivity: null,
		bootstrap: fit.bootstrap,
		warnings: [...prepared.warnings, ...fixedSlopeWarnings(spec)]
	};
}

function fixedSlopeWarnings(spec: RefitSpec): CalibrationWarning[] {
	if (spec.fixedSlope === null || spec.fixedSlopeError != null) return [];
	return [
		{
			code: 'fixed_slope_error_missing',
			message: `the slope is held at ${spec.fixedSlope} without an error, so its uncertainty reaches no coefficient; give the adopted slope's error`,
			field: 'fixed_slope_error',
			details: { fixedSlope: spec.fixedSlope }
		}
	];
}

/**
 * σ_int for methods that do not fit it: for wls the scatter left after the stated errors,
 * √max(0, Σr²/dof − ⟨σ²⟩); for ols, which has no per-star errors, the residual SD itself.
 */
function intrinsicScatterOf(
	spec: RefitSpec,
	fit: ReturnType<typeof fitLinearRelation>,
	errors: ReadonlyMap<string, number>
): Pick<FittedRefit, 'intrinsicScatter' | 'intrinsicScatterError' | 'intrinsicScatterSource'> {
	if (fit.intrinsicScatter) {
		return {
			intrinsicScatter: fit.intrinsicScatter.value,
			intrinsicScatterError: fit.intrinsicScatter.error,
			intrinsicScatterSource: 'maximum_likelihood'
		};
	}
	if (spec.method === 'ols')
		return { intrinsicScatter: fit.residualSd, intrinsicScatterError: null, intrinsicScatterSource: 'residual_sd' };
	return {
		intrinsicScatter: excessScatter(fit, errors),
		intrinsicScatterError: null,
		intrinsicScatterSource: 'excess_scatter'
	};
}

function excessScatter(fit: ReturnType<typeof fitLinearRelation>, errors: ReadonlyMap<string, number>): number {
	const used = fit.residuals.filter((residual) => residual.used);
	if (used.length === 0 || fit.degreesOfFreedom <= 0) return 0;
	const meanVariance = used.reduce((sum, residual) => sum + (errors.get(residual.star) ?? 0) ** 2, 0) / used.length;
	return Math.sqrt(Math.max(0, fit.residualSd ** 2 - meanVariance));
}

/** The `fit` block a frozen version records: the whole spec, snake_case, nulls written. */
export function frozenFitSpec(result: RefitResult): RelationVersionContent['fit'] {
	const { spec } = result;
	const fittedOffset = spec.parallaxOffset?.mode === 'fitted';
	return {
		method: spec.method,
		anchor: spec.anchor,
		weighted_covariance: spec.method === 'ols' ? null : spec.weightedCovariance,
		fixed_slope: spec.fixedSlope,
		fixed_zero_point: spec.fixedZeroPoint,
		clipping: spec.clipping ? { sigma: spec.clipping.sigma, max_iterations: spec.clipping.maxIterations } : null,
		extinction_law: spec.extinctionLaw,
		r_v: spec.rV,
		// A fitted offset is recorded as the total offset found (adopted + fitted) with its statistical error.
		parallax_offset: spec.parallaxOffset
			? {
					mode: spec.parallaxOffset.mode,
					value: fittedOffset ? spec.parallaxOffset.value + (result.parallaxOffsetMas ?? 0) : spec.parallaxOffset.value,
					error: fittedOffset ? (result.errors.parallaxOffset ?? 0) : spec.parallaxOffset.error
				}
			: null,
		bootstrap: result.bootstrap
			? {
					resamples: result.bootstrap.resamples,
					generator: result.bootstrap.generator,
					seed: result.bootstrap.seed,
					level: result.bootstrap.level
				}
			: null,
		population: spec.population,
		period_filter: { log_period_min: spec.periodFilter.logPeriodMin, log_period_max: spec.periodFilter.logPeriodMax },
		fundamentalised: spec.fundamentalise,
		assumed_intrinsic_scatter: spec.assumedIntrinsicScatter
	};
}

export interface VersionIdentity {
	slug: string;
	version: number;
	magnitudeSystem: MagnitudeSystem;
	calibratorSet: { slug: string; revision: number; digest: string };
	approvedBy: { name: string; orcid: string | null }[];
	/** ISO 8601 UTC, e.g. 2026-12-01T18:00:00Z. */
	approvedAt: string;
}

/**
 * The frozen content of a version made from a refit, validated against the one schema. `engineVersion`
 * selects the content's shape: a version frozen by engine 1.x is rebuilt without the keys engine 2 added
 * (systematics, fit_quality, wesenheit_ratio), so it keeps reproducing its own digest.
 */
export function versionContentFromRefit(
	result: RefitResult,
	identity: VersionIdentity,
	engineVersion: string = ENGINE_VERSION
): RelationVersionContent {
	const base = baseContent(result, identity, engineVersion);
	if (engineMajor(engineVersion) < 2) return parseRelationVersionContent(base);
	// A result stored before engine 2 lacks these; they are then judged from what it has.
	const quality = result.fitQuality ?? fitQualityOf(result.reducedChiSquare, result.degreesOfFreedom, false);
	return parseRelationVersionContent({
		...base,
		fit: {
			...base.fit,
			intrinsic_scatter_estimator:
				result.spec.method === 'ml_scatter' ? (result.spec.intrinsicScatterEstimator ?? 'ml') : null
		},
		systematics: { terms: (result.calibrationSystematics ?? []).map(frozenSystematicTerm) },
		fit_quality: {
			reduced_chi_square: quality.reducedChiSquare,
			degrees_of_freedom: quality.degreesOfFreedom,
			covariance_scaled: quality.covarianceScaled,
			errors_too_small: quality.errorsTooSmall
		},
		wesenheit_ratio: result.wesenheitRatio ?? null
	});
}

function baseContent(result: RefitResult, identity: VersionIdentity, engineVersion: string) {
	return {
		ref: `${identity.slug}@${identity.version}`,
		version: identity.version,
		band: result.spec.bandId,
		population: result.spec.population,
		magnitude_system: identity.magnitudeSystem,
		form: result.spec.form,
		coefficients: {
			zero_point: result.coefficients.zeroPoint,
			slope: result.coefficients.slope,
			metallicity_term: result.coefficients.metallicityTerm
		},
		pivot_log_period: result.spec.pivotLogPeriod,
		pivot_feh: result.spec.pivotFeh,
		covariance: { axes: [...result.covariance.axes], matrix: symmetrised(result.covariance.matrix) },
		intrinsic_scatter: result.intrinsicScatter,
		n_used: result.nUsed,
		rejected: result.rejected.map((rejection) => ({
			star: rejection.star,
			reason: rejection.reason,
			standardized_residual: rejection.standardizedResidual
		})),
		validity: {
			log_period_min: result.validity.logPeriodMin,
			log_period_max: result.validity.logPeriodMax,
			feh_min: result.validity.fehMin,
			feh_max: result.validity.fehMax
		},
		fit: frozenFitSpec(result),
		engine_version: engineVersion,
		calibrator_set: { ...identity.calibratorSet },
		approved_by: identity.approvedBy.map((approver) => ({ ...approver })),
		approved_at: identity.approvedAt
	};
}

/** Frozen covariances are exactly symmetric; a solver's rounding can differ in the last bit across the diagonal. */
function symmetrised(matrix: readonly (readonly number[])[]): number[][] {
	return matrix.map((row, i) => row.map((value, j) => (i === j ? value : (value + matrix[j][i]) / 2)));
}
