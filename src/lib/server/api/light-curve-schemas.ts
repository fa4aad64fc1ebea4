/** Request and response schemas of light-curve uploads and analyses, registered for the OpenAPI document. */
import { z } from 'zod';
import {
	POPULATION_IDS,
	SINGLE_BAND_IDS,
	STAR_ID_PATTERN,
	STAR_ID_RULE,
	TIME_REFERENCES
} from '../../calibration/index';
import { describeOperation, registerApiSchema } from './schema-registry';

export const ANALYSE_OPERATION = 'POST /api/v1/light-curves/analyse';
export const UPLOAD_OPERATION = 'POST /api/v1/light-curves/uploads';
export const UPLOAD_LIST_OPERATION = 'GET /api/v1/light-curves/uploads';
export const UPLOAD_READ_OPERATION = 'GET /api/v1/light-curves/uploads/{id}';

/** Size caps of one analyse request (the JSON body limit applies too: 413 beyond it). */
export const ANALYSE_LIMITS = {
	maxSeries: 500,
	maxPointsPerSeries: 100_000,
	maxPoints: 500_000
} as const;

const finite = z.number().refine(Number.isFinite, 'must be a finite number');

export const LightCurvePointSchema = z.tuple([
	finite,
	finite,
	z.number().positive('must be > 0 (the error sets the weight)')
]);

export const LightCurveSeriesSchema = z
	.object({
		id: z.string().regex(STAR_ID_PATTERN, STAR_ID_RULE),
		band: z.enum(SINGLE_BAND_IDS).nullable().optional(),
		time_reference: z.enum(TIME_REFERENCES),
		time_offset_days: finite.default(0),
		population: z.enum(POPULATION_IDS).default('classical_fundamental'),
		points: z.array(LightCurvePointSchema).min(10, 'needs at least 10 points').max(ANALYSE_LIMITS.maxPointsPerSeries)
	})
	.strict();

export const AnalyseRequestSchema = registerApiSchema(
	z
		.object({
			series: z.array(LightCurveSeriesSchema).min(1).max(ANALYSE_LIMITS.maxSeries),
			min_period_days: z.number().positive().optional(),
			max_period_days: z.number().positive().optional()
		})
		.strict()
		// Checked even when a series is bad, so one answer names every problem.
		.refine(
			(body) =>
				body.min_period_days === undefined ||
				body.max_period_days === undefined ||
				body.max_period_days > body.min_period_days,
			{
				path: ['max_period_days'],
				message: 'must be greater than min_period_days',
				when: ({ value }) => {
					const range = value as { min_period_days?: unknown; max_period_days?: unknown } | null;
					return typeof range?.min_period_days === 'number' && typeof range?.max_period_days === 'number';
				}
			}
		)
		.superRefine((body, ctx) => {
			const total = body.series.reduce((sum, series) => sum + series.points.length, 0);
			if (total > ANALYSE_LIMITS.maxPoints) {
				ctx.addIssue({
					code: 'custom',
					path: ['series'],
					message: `${total} points in all; at most ${ANALYSE_LIMITS.maxPoints} per request`
				});
			}
		}),
	{
		id: 'LightCurveAnalyseRequest',
		description:
			'Light curves to analyse: each series is one star in one band, points [time, mag, err] with time in `time_reference` minus `time_offset_days` (e.g. HJD − 2450000).',
		requestFor: [ANALYSE_OPERATION]
	}
);

export type AnalyseRequest = z.infer<typeof AnalyseRequestSchema>;

const WarningSchema = z.object({
	code: z.string(),
	message: z.string(),
	field: z.string().nullable(),
	details: z.record(z.string(), z.union([z.number(), z.string(), z.null()]))
});

const AliasSchema = z.object({
	kind: z.enum(['one_day', 'one_year']),
	side: z.number().int(),
	frequency_per_day: z.number(),
	period_days: z.number(),
	power_ratio: z.number()
});

const resultFields = {
	id: z.string(),
	band: z.string().nullable(),
	population: z.string(),
	time_frame: z.enum(['HJD', 'BJD_TDB', 'JD']),
	n_points: z.number().int(),
	baseline_days: z.number(),
	period_days: z.number(),
	period_err_days: z.number(),
	frequency_per_day: z.number(),
	peak_power: z.number(),
	false_alarm_probability: z.number(),
	periodogram_method: z.enum(['exact', 'fast']),
	amplitude: z.number(),
	epoch_of_maximum: z.number().describe('Full days on time_frame (MJD input is reported as JD).'),
	mean_mag_intensity: z.number(),
	mean_mag_intensity_err: z.number(),
	mean_mag_magnitude: z.number(),
	mean_mag_magnitude_err: z.number(),
	fourier_order: z.number().int(),
	fourier_coefficients: z
		.array(z.number())
		.describe(
			'[A0, a1, b1, a2, b2, …]: m(φ) = A0 + Σ a_k cos 2πkφ + b_k sin 2πkφ, φ = (t − epoch_of_maximum)/period mod 1.'
		),
	fourier_shape: z.object({
		amplitudes: z.array(z.number()),
		phases: z.array(z.number()),
		r21: z.number().nullable(),
		r31: z.number().nullable(),
		phi21: z.number().nullable(),
		phi31: z.number().nullable()
	}),
	reduced_chi_square: z.number().nullable(),
	residual_rms: z.number(),
	phase_coverage: z.object({
		covered_fraction: z.number(),
		largest_gap: z.number(),
		largest_gap_start: z.number(),
		bins: z.number().int()
	}),
	aliases: z.array(AliasSchema),
	warnings: z.array(WarningSchema)
};

export const LightCurveResultSchema = registerApiSchema(z.object(resultFields), {
	id: 'LightCurveResult',
	description: 'The analysis of one series: period, uncertainty, significance, Fourier model, means and warnings.'
});

export const AnalyseResponseSchema = registerApiSchema(
	z.object({ engine_version: z.string(), results: z.array(LightCurveResultSchema) }),
	{
		id: 'LightCurveAnalyseResponse',
		description: 'One result per series, in request order.',
		responseFor: [ANALYSE_OPERATION]
	}
);

export const LightCurveJobSchema = registerApiSchema(
	z.object({
		id: z.string(),
		kind: z.string(),
		state: z.enum(['queued', 'running', 'succeeded', 'failed']),
		progress: z.number().min(0).max(1),
		stage: z.string(),
		created_at: z.string().nullable(),
		started_at: z.string().nullable(),
		finished_at: z.string().nullable(),
		result: z.record(z.string(), z.unknown()).nullable(),
		error: z.record(z.string(), z.unknown()).nullable()
	}),
	{
		id: 'LightCurveJob',
		description:
			'A background light-curve analysis; poll its Location (GET /api/v1/jobs/{id}) until it succeeds or fails.'
	}
);

export const StoredLightCurveResultSchema = registerApiSchema(
	z.object({ ...resultFields, analysis_id: z.string(), engine_version: z.string(), created_at: z.string().nullable() }),
	{ id: 'StoredLightCurveResult', description: 'A stored analysis of one star in one band of an upload.' }
);

export const LightCurveUploadSchema = registerApiSchema(
	z.object({
		id: z.string(),
		uploaded_by: z.object({ id: z.string(), display_name: z.string().nullable() }),
		created_at: z.string().nullable(),
		source: z.object({ sha256: z.string(), name: z.string(), media_type: z.string(), bytes: z.number().int() }),
		time_reference: z.enum(TIME_REFERENCES),
		time_offset_days: z.number(),
		population: z.string(),
		min_period_days: z.number().nullable(),
		max_period_days: z.number().nullable(),
		star_count: z.number().int(),
		series: z.array(z.object({ star: z.string(), band: z.string().nullable(), points: z.number().int() })),
		job: LightCurveJobSchema.nullable(),
		results: z.array(StoredLightCurveResultSchema)
	}),
	{
		id: 'LightCurveUpload',
		description:
			'An uploaded light-curve file, its analysis job and, once the job has finished, one result per star and band.',
		responseFor: [UPLOAD_OPERATION, UPLOAD_READ_OPERATION]
	}
);

export const LightCurveUploadListSchema = registerApiSchema(
	z.object({
		uploads: z.array(
			z.object({
				id: z.string(),
				created_at: z.string().nullable(),
				source_name: z.string(),
				star_count: z.number().int(),
				series_count: z.number().int(),
				state: z.string(),
				progress: z.number().min(0).max(1)
			})
		)
	}),
	{
		id: 'LightCurveUploadList',
		description: 'The caller’s light-curve uploads, newest first.',
		responseFor: [UPLOAD_LIST_OPERATION]
	}
);

export const UploadQuerySchema = z.object({
	time_reference: z.string().nullable(),
	time_offset_days: z.string().nullable(),
	star: z.string().max(100).nullable(),
	band: z.string().max(20).nullable(),
	name: z.string().max(200).nullable(),
	population: z.enum(POPULATION_IDS).default('classical_fundamental'),
	min_period_days: z.coerce.number().positive().optional(),
	max_period_days: z.coerce.number().positive().optional()
});

const problemResponse = (description: string) => ({
	description,
	schema: 'Problem',
	mediaTypes: ['application/problem+json']
});

describeOperation(ANALYSE_OPERATION, {
	description:
		'Period search (generalised Lomb–Scargle), Fourier model with its order chosen by BIC, refined period and error, amplitude, epoch of maximum, intensity and magnitude means, aliases and warnings for each series. Up to 10 series and 20 000 points in all answer 200; larger batches (up to 500 series and 500 000 points) answer 202 with a job at its Location. HJD, BJD_TDB and JD/MJD bands of one star are refused together, never mixed.',
	responses: {
		'200': { description: 'Every series analysed, in request order.', schema: 'LightCurveAnalyseResponse' },
		'202': {
			description: 'Queued; poll the Location (GET /api/v1/jobs/{id}) for progress per series and the results.',
			schema: 'LightCurveJob'
		},
		'413': problemResponse('The body is larger than the JSON limit.'),
		'415': problemResponse('The body is not application/json.'),
		'422': problemResponse('A series is unusable; errors[].path names it, e.g. series[3].points[17][2].')
	}
});

const query = (
	name: string,
	description: string,
	schema: Record<string, unknown> = { type: 'string' },
	required = false
) => ({
	name,
	in: 'query' as const,
	required,
	description,
	schema
});

describeOperation(UPLOAD_OPERATION, {
	description:
		'The body is the raw file, text/csv or text/tab-separated-values (UTF-8), with columns time, magnitude, error and optionally band and star. The file is stored unchanged by its sha256 and analysed by a background job; a refused file stores nothing and lists every problem by line, column, value and reason.',
	parameters: [
		query('time_reference', 'Time frame of the time column.', { type: 'string', enum: [...TIME_REFERENCES] }, true),
		query('time_offset_days', 'Added to every time, e.g. 2450000 for “HJD − 2450000”.', { type: 'number' }),
		query('mapping', 'JSON object: source column → time, magnitude, error, band, star, or null to ignore the column.'),
		query('star', 'Star id for a file without a star column.'),
		query('band', 'Band for a file without a band column.', { type: 'string', enum: [...SINGLE_BAND_IDS] }),
		query('name', 'The file name to show.'),
		query('population', 'Population the stars are taken to belong to (sets the warnings).', {
			type: 'string',
			enum: [...POPULATION_IDS]
		}),
		query('min_period_days', 'Shortest period searched (default 0.2 d).', { type: 'number' }),
		query('max_period_days', 'Longest period searched (default the baseline).', { type: 'number' })
	],
	responses: {
		'201': { description: 'Stored; the analysis job is queued.', schema: 'LightCurveUpload' },
		'413': problemResponse('The file is larger than the upload limit.'),
		'415': problemResponse('The body is neither text/csv nor text/tab-separated-values.'),
		'422': problemResponse('The file or a query parameter is refused; `issues` lists line, column, value and reason.')
	}
});
