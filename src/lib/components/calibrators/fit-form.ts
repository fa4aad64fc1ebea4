/**
 * The refit form as flat text values (what inputs hold and a no-script post sends) and its mapping to
 * the snake_case fit request of `POST /api/v1/fits`. The server validates the request again.
 */
export interface FitFormValues {
	/** `<set slug>@<revision>` */
	revision: string;
	band: string;
	population: string;
	method: string;
	/** `reml` or `ml`; used by ml_scatter only. */
	scatterEstimator: string;
	logPeriodMin: string;
	logPeriodMax: string;
	fundamentalise: boolean;
	fixedSlope: string;
	fixedSlopeError: string;
	clipping: boolean;
	clipSigma: string;
	clipIterations: string;
	extinctionLaw: string;
	rV: string;
	/** R of a Wesenheit band other than the catalogue's, with the reason; empty for the catalogue's. */
	wesenheitRatio: string;
	wesenheitRatioReason: string;
	parallaxOffsetMode: string;
	parallaxOffset: string;
	parallaxOffsetError: string;
	bootstrapResamples: string;
	bootstrapSeed: string;
}

export type FitAnchor = 'parallax' | 'host';

export interface FitRequestBody {
	calibrator_set: string;
	revision: number;
	band: string;
	population: string;
	anchor: FitAnchor;
	method: string;
	period_filter: { log_period_min: number | null; log_period_max: number | null };
	fundamentalise: boolean;
	fixed_slope: number | null;
	/** Absent from requests stored before the adopted slope's error was asked for. */
	fixed_slope_error?: number | null;
	clipping: { sigma: number; max_iterations: number } | null;
	extinction_law: string | null;
	r_v: number | null;
	parallax_offset: { mode: 'given' | 'fitted'; value: number; error: number } | null;
	/** Absent from requests stored before a curator could choose R. */
	wesenheit_ratio?: { value: number; reason: string } | null;
	bootstrap: { resamples: number; seed: number; level: number } | null;
	/** Absent from requests stored before REML was offered (they used ML). */
	intrinsic_scatter_estimator?: 'ml' | 'reml' | null;
}

export type FitFormErrors = Partial<Record<keyof FitFormValues, string>>;

const TEXT_KEYS = [
	'revision',
	'band',
	'population',
	'method',
	'scatterEstimator',
	'logPeriodMin',
	'logPeriodMax',
	'fixedSlope',
	'fixedSlopeError',
	'clipSigma',
	'clipIterations',
	'extinctionLaw',
	'rV',
	'wesenheitRatio',
	'wesenheitRatioReason',
	'parallaxOffsetMode',
	'parallaxOffset',
	'parallaxOffsetError',
	'bootstrapResamples',
	'bootstrapSeed'
] as const;

export function valuesFromForm(form: FormData): FitFormValues {
	const text = Object.fromEntries(TEXT_KEYS.map((key) => [key, String(form.get(key) ?? '').trim()])) as Record<
		(typeof TEXT_KEYS)[number],
		string
	>;
	return { ...text, fundamentalise: form.get('fundamentalise') === 'on', clipping: form.get('clipping') === 'on' };
}

const show = (value: number | null | undefined) => (value === null || value === undefined ? '' : String(value));

export function valuesFromRequest(request: FitRequestBody): FitFormValues {
	return {
		revision: `${request.calibrator_set}@${request.revision}`,
		band: request.band,
		population: request.population,
		method: request.method,
		scatterEstimator: request.intrinsic_scatter_estimator ?? (request.method === 'ml_scatter' ? 'ml' : 'reml'),
		logPeriodMin: show(request.period_filter.log_period_min),
		logPeriodMax: show(request.period_filter.log_period_max),
		fundamentalise: request.fundamentalise,
		fixedSlope: show(request.fixed_slope),
		fixedSlopeError: show(request.fixed_slope_error),
		clipping: request.clipping !== null,
		clipSigma: show(request.clipping?.sigma ?? 3),
		clipIterations: show(request.clipping?.max_iterations ?? 10),
		extinctionLaw: request.extinction_law ?? '',
		rV: show(request.r_v),
		wesenheitRatio: show(request.wesenheit_ratio?.value),
		wesenheitRatioReason: request.wesenheit_ratio?.reason ?? '',
		parallaxOffsetMode: request.parallax_offset?.mode ?? '',
		parallaxOffset: show(request.parallax_offset?.value),
		parallaxOffsetError: show(request.parallax_offset?.error),
		bootstrapResamples: show(request.bootstrap?.resamples),
		bootstrapSeed: show(request.bootstrap?.seed ?? 1)
	};
}

export function defaultValues(revision: string, band: string, population: string, anchor: FitAnchor): FitFormValues {
	return {
		revision,
		band,
		population,
		method: anchor === 'parallax' ? 'parallax_space' : 'wls',
		scatterEstimator: 'reml',
		logPeriodMin: '',
		logPeriodMax: '',
		fundamentalise: false,
		fixedSlope: '',
		fixedSlopeError: '',
		clipping: false,
		clipSigma: '3',
		clipIterations: '10',
		extinctionLaw: '',
		rV: '',
		wesenheitRatio: '',
		wesenheitRatioReason: '',
		parallaxOffsetMode: '',
		parallaxOffset: '',
		parallaxOffsetError: '',
		bootstrapResamples: '',
		bootstrapSeed: '1'
	};
}

const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

export function fitRequestFromValues(
	values: FitFormValues,
	anchor: FitAnchor
): { ok: true; request: FitRequestBody } | { ok: false; errors: FitFormErrors } {
	const errors: FitFormErrors = {};
	const number = (key: keyof FitFormValues, required = false): number | null => {
		const raw = String(values[key]);
		if (raw === '') {
			if (required) errors[key] = 'Give a number.';
			return null;
		}
		if (!NUMBER.test(raw)) {
			errors[key] = `“${raw}” is not a number.`;
			return null;
		}
		return Number(raw);
	};
	const at = values.revision.lastIndexOf('@');
	const revision = Number(values.revision.slice(at + 1));
	if (at <= 0 || !Number.isInteger(revision) || revision < 1) errors.revision = 'Choose a calibrator revision.';
	if (!values.band) errors.band = 'Choose a band.';
	if (!values.population) errors.population = 'Choose a population.';
	if (!values.method) errors.method = 'Choose a method.';
	const usesEstimator = values.method === 'ml_scatter';
	if (usesEstimator && values.scatterEstimator !== 'ml' && values.scatterEstimator !== 'reml')
		errors.scatterEstimator = 'Choose REML or ML.';
	const min = number('logPeriodMin');
	const max = number('logPeriodMax');
	if (min !== null && max !== null && min >= max) errors.logPeriodMax = 'Must be above the lower limit.';
	const fixedSlope = number('fixedSlope');
	const fixedSlopeError = number('fixedSlopeError');
	if (fixedSlopeError !== null && fixedSlopeError < 0) errors.fixedSlopeError = 'Must not be negative.';
	if (fixedSlopeError !== null && fixedSlope === null) errors.fixedSlopeError = 'Give the fixed slope it belongs to.';
	const sigma = values.clipping ? number('clipSigma', true) : null;
	const iterations = values.clipping ? number('clipIterations', true) : null;
	if (sigma !== null && sigma <= 0) errors.clipSigma = 'Must be positive.';
	if (iterations !== null && (!Number.isInteger(iterations) || iterations < 1 || iterations > 100))
		errors.clipIterations = 'A whole number from 1 to 100.';
	const rV = number('rV');
	if (rV !== null && rV <= 0) errors.rV = 'Must be positive.';
	const ratio = number('wesenheitRatio');
	if (ratio !== null && ratio <= 0) errors.wesenheitRatio = 'Must be positive.';
	if (ratio !== null && values.wesenheitRatioReason === '')
		errors.wesenheitRatioReason = 'Say why this R (e.g. the law and R_V it comes from).';
	let parallaxOffset: FitRequestBody['parallax_offset'] = null;
	if (values.parallaxOffsetMode === 'given' || values.parallaxOffsetMode === 'fitted') {
		const value = number('parallaxOffset', values.parallaxOffsetMode === 'given') ?? 0;
		const error = number('parallaxOffsetError') ?? 0;
		if (error < 0) errors.parallaxOffsetError = 'Must not be negative.';
		parallaxOffset = { mode: values.parallaxOffsetMode, value, error };
	}
	const resamples = number('bootstrapResamples');
	const seed = number('bootstrapSeed');
	if (resamples !== null && (!Number.isInteger(resamples) || resamples < 1 || resamples > 100_000))
		errors.bootstrapResamples = 'A whole number from 1 to 100000, or empty for none.';
	if (resamples !== null && (seed === null || !Number.isInteger(seed) || seed < 0 || seed > 2 ** 32 - 1))
		errors.bootstrapSeed = 'A whole number from 0 to 4294967295.';
	if (Object.keys(errors).length > 0) return { ok: false, errors };
	return {
		ok: true,
		request: {
			calibrator_set: values.revision.slice(0, at),
			revision,
			band: values.band,
			population: values.population,
			anchor,
			method: values.method,
			period_filter: { log_period_min: min, log_period_max: max },
			fundamentalise: values.fundamentalise,
			fixed_slope: fixedSlope,
			fixed_slope_error: fixedSlopeError,
			clipping: values.clipping ? { sigma: sigma!, max_iterations: iterations! } : null,
			extinction_law: values.extinctionLaw || null,
			r_v: rV,
			parallax_offset: parallaxOffset,
			wesenheit_ratio: ratio === null ? null : { value: ratio, reason: values.wesenheitRatioReason },
			bootstrap: resamples !== null ? { resamples, seed: seed!, level: 0.68 } : null,
			intrinsic_scatter_estimator: usesEstimator ? (values.scatterEstimator as 'ml' | 'reml') : null
		}
	};
}
