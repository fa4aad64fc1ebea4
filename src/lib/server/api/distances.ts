import { z } from 'zod';
import {
	CalibrationInputError,
	EXTINCTION_LAW_IDS,
	ExtinctionNotApplicableError,
	POPULATION_IDS,
	getBand,
	isPopulationId,
	relationFromContent,
	type CalibrationWarning,
	type ExtinctionLawId,
	type PopulationId,
	type RelationVersionContent
} from '../../calibration/index';
import { hostDistanceBatch, type HostBatchResult, type HostSharedInputs } from '../../calibration/host-batch';
import { relationBudgetRecord, type RelationBudgetRecord } from '../../calibration/relation-systematics';
import { distanceFromModulus } from '../../calibration/units';
import type { EntityManager } from '@mikro-orm/postgresql';
import type { Actor } from '../registry/actor';
import { RegistryError } from '../registry/errors';
import { findVersion, listVersions, visibleOrNull } from '../registry/versions';
import type { FieldError } from './problem';
import { parseRef } from './pinned-version';
import { describeOperation, registerApiSchema } from './schema-registry';

/** POST /api/v1/distances: a pinned relation applied to a host galaxy's Cepheids → per-star and combined μ0. */
const OPERATION = 'POST /api/v1/distances';
export const MAX_DISTANCE_STARS = 100_000;
/** 100 000 stars with long ids and every optional field fit well inside this. */
export const DISTANCE_BODY_LIMIT_BYTES = 48 * 1024 * 1024;
const MAX_ID_LENGTH = 200;
const MAX_LISTED_ERRORS = 200;

const finite = z.number();
const nonNegative = z.number().nonnegative();

export const DistanceStarSchema = registerApiSchema(
	z
		.object({
			id: z.string().min(1).max(MAX_ID_LENGTH),
			period_days: z.number().positive(),
			mean_mag: finite.describe("Apparent mean magnitude in the relation's band and magnitude system."),
			mean_mag_err: nonNegative,
			ebv: finite.nullable().optional().describe('E(B−V); single-band relations deredden with it.'),
			ebv_err: nonNegative.nullable().optional(),
			feh: finite.nullable().optional().describe('[Fe/H] (dex); the pivot is used when a γ relation has none.'),
			feh_err: nonNegative.nullable().optional(),
			population: z.enum(POPULATION_IDS).nullable().optional().describe('Classification of the star, if known.'),
			magnitude_system: z
				.enum(['Vega', 'AB'])
				.nullable()
				.optional()
				.describe(
					"The star's magnitude system; one other than the relation's is refused (422), an absent one is assumed equal (with a warning)."
				),
			wesenheit_ratio: z
				.number()
				.positive()
				.nullable()
				.optional()
				.describe(
					"R of the star's Wesenheit magnitude W = m1 − R·(m2 − m3); one other than the relation's is refused (422), an absent one is assumed equal (with a warning)."
				)
		})
		.strict(),
	{ id: 'DistanceStar', description: 'One Cepheid of a host galaxy: period, intensity-mean magnitude and reddening.' }
);

const requestShape = {
	relation: z.string().regex(/^[a-z0-9]+(?:-[a-z0-9]+)*@[1-9]\d{0,8}$/, 'must be "slug@version"'),
	extinction_law: z.enum(EXTINCTION_LAW_IDS).optional(),
	r_v: z.number().positive().optional(),
	clip_sigma: z.number().positive().nullable().optional().describe('σ-clipping threshold (default 3; null: none).'),
	foreground_ebv_err: nonNegative
		.optional()
		.describe('1σ of the foreground E(B−V) shared by every star (mag): a systematic of the host, not averaged down.'),
	host_metallicity: z
		.object({
			value: finite.describe('[Fe/H] (or [O/H]) of the host, e.g. an abundance-gradient value at the Cepheids.'),
			error: nonNegative.describe('Its 1σ (dex), shared by every star that takes it.'),
			scale: z
				.enum(['feh', 'o_h'])
				.default('feh')
				.describe('o_h: taken as [Fe/H] = [O/H] (solar-scaled abundances); the answer states the assumption.'),
			conversion_error: nonNegative.optional().describe('1σ (dex) of the [O/H] → [Fe/H] conversion, its own term.')
		})
		.strict()
		.optional()
		.describe("Taken by stars without their own [Fe/H] (instead of the relation's pivot)."),
	adopted_slope_err: nonNegative
		.optional()
		.describe("1σ (mag/dex) of the relation's slope as adopted for this host; enters at the host's mean log P."),
	crowding_correction: z
		.object({
			value: finite.describe(
				'Added to every apparent magnitude (mag); positive when blending made the stars look too bright.'
			),
			error: nonNegative.describe('Its 1σ (mag), a systematic of the host.')
		})
		.strict()
		.optional()
};

export const DistanceRequestSchema = registerApiSchema(
	z.object({ ...requestShape, stars: z.array(DistanceStarSchema).min(1).max(MAX_DISTANCE_STARS) }).strict(),
	{
		id: 'DistanceRequest',
		description: `A pinned relation and up to ${MAX_DISTANCE_STARS} Cepheids of one host galaxy.`,
		requestFor: [OPERATION]
	}
);
export type DistanceRequest = z.infer<typeof DistanceRequestSchema>;

/** The request without its stars: the stars are checked by `readStarColumns`, which allocates no object per star. */
const EnvelopeSchema = z.object({ ...requestShape, stars: z.array(z.unknown()) }).strict();

const WarningSchema = z.object({
	code: z.string(),
	message: z.string(),
	star: z.string().optional(),
	field: z.string().optional(),
	details: z.record(z.string(), z.union([z.number(), z.string(), z.null()])).optional()
});

const DistanceStarResultSchema = z.object({
	id: z.string(),
	log_period: z.number(),
	abs_mag: z.number(),
	abs_mag_err: z.number(),
	mu0: z.number(),
	mu0_err: z.number(),
	distance_mpc: z.number().describe('Median of 10^(μ0/5+1) for Gaussian μ0.'),
	distance_mpc_err: z.number().describe('First-order error d·(ln 10/5)·σ_μ0.'),
	distance_mpc_p16: z.number().describe('16th percentile, 10^((μ0 − σ)/5+1).'),
	distance_mpc_p84: z.number().describe('84th percentile, 10^((μ0 + σ)/5+1).'),
	rejected: z.boolean(),
	warnings: z.array(WarningSchema)
});

export const DistanceResponseSchema = registerApiSchema(
	z.object({
		relation: z.object({
			ref: z.string(),
			digest: z.string(),
			status: z.enum(['current', 'superseded', 'deprecated']),
			band: z.string(),
			population: z.enum(POPULATION_IDS),
			magnitude_system: z.enum(['Vega', 'AB']),
			validity: z.object({
				log_period_min: z.number(),
				log_period_max: z.number(),
				feh_min: z.number().nullable(),
				feh_max: z.number().nullable()
			}),
			coefficients: z.object({ zero_point: z.number(), slope: z.number(), metallicity_term: z.number().nullable() }),
			pivot_log_period: z.number(),
			pivot_feh: z.number(),
			wesenheit_ratio: z.number().nullable().describe('R of the Wesenheit band the stars were compared against.'),
			engine_version: z.string(),
			systematics_recorded: z.boolean().describe('False for versions frozen before systematics were recorded.')
		}),
		settings: z.object({
			extinction_law: z.enum(EXTINCTION_LAW_IDS).nullable(),
			r_v: z.number().nullable(),
			clip_sigma: z.number().nullable(),
			foreground_ebv_err: z.number().nullable(),
			host_metallicity: z
				.object({
					value: z.number(),
					error: z.number(),
					scale: z.enum(['feh', 'o_h']),
					conversion_error: z.number().nullable()
				})
				.nullable(),
			adopted_slope_err: z.number().nullable(),
			crowding_correction: z.object({ value: z.number(), error: z.number() }).nullable()
		}),
		distance_convention: z.string(),
		results: z.array(DistanceStarResultSchema),
		combined: z.object({
			mu0: z.number(),
			mu0_err_stat: z.number(),
			mu0_err_sys: z.number(),
			mu0_err: z.number(),
			distance_mpc: z.number().describe('Median of 10^(μ0/5+1) for Gaussian μ0 ± mu0_err.'),
			distance_mpc_err: z.number().describe('First-order error from mu0_err.'),
			distance_mpc_p16: z.number(),
			distance_mpc_p84: z.number(),
			n_used: z.number().int(),
			n_assumed_metallicity: z
				.number()
				.int()
				.describe("Stars used whose [Fe/H] was assumed (the host's value, or the relation's pivot)."),
			rejected: z.array(z.object({ id: z.string(), reason: z.string(), standardized_residual: z.number() })),
			error_budget: z
				.array(z.object({ id: z.string(), label: z.string(), value: z.number().describe('1σ in mag of μ0') }))
				.describe('The systematic terms, each once; mu0_err_sys is their quadrature sum.'),
			mean_log_period: z.number(),
			mean_feh: z.number().nullable(),
			reduced_chi_square: z.number().nullable(),
			iterations: z.number().int()
		}),
		warnings: z.array(WarningSchema)
	}),
	{
		id: 'DistanceResponse',
		description:
			'Per-star absolute magnitude, μ0 and distance with warnings, and the σ-clipped weighted host distance with its statistical and systematic errors.',
		responseFor: [OPERATION]
	}
);
export type DistanceResponse = z.infer<typeof DistanceResponseSchema>;

export const DISTANCE_CONVENTION =
	'distance_mpc is the median of 10^(μ0/5+1) for Gaussian μ0; distance_mpc_p16/p84 are its 16th/84th percentiles, 10^((μ0 ∓ σ)/5+1) (asymmetric); distance_mpc_err is the first-order d·(ln 10/5)·σ.';

const problemJson = { schema: 'Problem', mediaTypes: ['application/problem+json'] };
describeOperation(OPERATION, {
	description:
		"Applies a pinned relation version to one host galaxy's Cepheids: per-star M, μ0 and distance with warnings " +
		'(extrapolation beyond the validity range, population mismatch, missing reddening), and the σ-clipped ' +
		'inverse-variance host distance with statistical and systematic errors kept apart. Public versions need no ' +
		'token; a private or embargoed version answers 404 to callers who may not see it.',
	responses: {
		'400': { description: 'The body is not JSON', ...problemJson },
		'404': { description: 'No such version, or not one the caller may see', ...problemJson },
		'413': { description: `More than ${MAX_DISTANCE_STARS} stars, or a body over the limit`, ...problemJson },
		'415': { description: 'The body is not application/json', ...problemJson },
		'422': {
			description:
				"Bad stars (each named as stars/i/field, including a magnitude_system or wesenheit_ratio other than the relation's) or an unusable extinction law",
			...problemJson
		}
	}
});
export type DistanceStarResult = z.infer<typeof DistanceStarResultSchema>;

/** The stars as typed columns, ready for the engine. */
export interface StarColumnsInput {
	ids: string[];
	periodDays: Float64Array;
	mag: Float64Array;
	magErr: Float64Array;
	ebv?: Float64Array;
	ebvErr?: Float64Array;
	feh?: Float64Array;
	fehErr?: Float64Array;
	populations?: (PopulationId | null)[];
	/** Per star; absent when no star gave one. */
	magnitudeSystems?: ('Vega' | 'AB' | null)[];
	/** Per star; NaN where a star gave none; absent when no star gave one. */
	wesenheitRatios?: Float64Array;
}

const STAR_FIELDS = new Set([
	'id',
	'period_days',
	'mean_mag',
	'mean_mag_err',
	'ebv',
	'ebv_err',
	'feh',
	'feh_err',
	'population',
	'magnitude_system',
	'wesenheit_ratio'
]);

type NumberRule = 'any' | 'positive' | 'non_negative';

/** Collects star problems, naming `stars/i/field` and the star's id; keeps the first MAX_LISTED_ERRORS. */
class StarProblems {
	readonly listed: FieldError[] = [];
	count = 0;
	index = 0;
	id: string | null = null;

	add(field: string, why: string): void {
		this.count++;
		if (this.listed.length < MAX_LISTED_ERRORS) {
			const star = this.id === null ? '' : ` (star ${JSON.stringify(this.id)})`;
			this.listed.push({
				path: `stars/${this.index}${field ? `/${field}` : ''}`,
				message: `stars[${this.index}]${field ? `.${field}` : ''}${star}: ${why}`
			});
		}
	}

	number(field: string, value: unknown, rule: NumberRule): number {
		if (typeof value !== 'number') {
			this.add(field, value === undefined ? 'is required' : 'must be a number');
			return Number.NaN;
		}
		if (rule === 'positive' && !(value > 0)) this.add(field, 'must be > 0');
		if (rule === 'non_negative' && !(value >= 0)) this.add(field, 'must be ≥ 0');
		return value;
	}

	optional(field: string, value: unknown, rule: NumberRule): number {
		return value === undefined || value === null ? Number.NaN : this.number(field, value, rule);
	}
}

/**
 * Checks every star as DistanceStarSchema would, writing values straight into typed arrays (no object
 * per star). Each problem names `stars/i/field` and the star's id, every one of them up to a cap.
 */
export function readStarColumns(stars: readonly unknown[]): StarColumnsInput {
	const n = stars.length;
	const ids = new Array<string>(n);
	const periodDays = new Float64Array(n);
	const mag = new Float64Array(n);
	const magErr = new Float64Array(n);
	const ebv = new Float64Array(n);
	const ebvErr = new Float64Array(n);
	const feh = new Float64Array(n);
	const fehErr = new Float64Array(n);
	let populations: (PopulationId | null)[] | undefined;
	let magnitudeSystems: ('Vega' | 'AB' | null)[] | undefined;
	let wesenheitRatios: Float64Array | undefined;
	let anyEbv = false;
	let anyFeh = false;
	const problems = new StarProblems();
	const seen = new Set<string>();
	for (let i = 0; i < n; i++) {
		const raw = stars[i];
		problems.index = i;
		problems.id = null;
		if (raw === null || typeof raw !== 'object' || Array.isArray(raw)) {
			problems.add('', 'must be an object');
			continue;
		}
		const star = raw as Record<string, unknown>;
		const id = star.id;
		if (typeof id === 'string' && id.length > 0 && id.length <= MAX_ID_LENGTH) {
			problems.id = id;
			if (seen.has(id)) problems.add('id', 'duplicate star id');
			seen.add(id);
			ids[i] = id;
		} else {
			problems.add('id', `must be a string of 1 to ${MAX_ID_LENGTH} characters`);
		}
		for (const key in star) if (!STAR_FIELDS.has(key)) problems.add(key, 'is not a field of a star');
		periodDays[i] = problems.number('period_days', star.period_days, 'positive');
		mag[i] = problems.number('mean_mag', star.mean_mag, 'any');
		magErr[i] = problems.number('mean_mag_err', star.mean_mag_err, 'non_negative');
		ebv[i] = problems.optional('ebv', star.ebv, 'any');
		ebvErr[i] = problems.optional('ebv_err', star.ebv_err, 'non_negative');
		feh[i] = problems.optional('feh', star.feh, 'any');
		fehErr[i] = problems.optional('feh_err', star.feh_err, 'non_negative');
		anyEbv ||= ebv[i] === ebv[i];
		anyFeh ||= feh[i] === feh[i];
		const population = star.population;
		if (population !== undefined && population !== null) {
			if (!isPopulationId(population)) problems.add('population', `must be one of ${POPULATION_IDS.join(', ')}`);
			else (populations ??= new Array<PopulationId | null>(n).fill(null))[i] = population;
		}
		const system = star.magnitude_system;
		if (system !== undefined && system !== null) {
			if (system !== 'Vega' && system !== 'AB') problems.add('magnitude_system', 'must be "Vega" or "AB"');
			else (magnitudeSystems ??= new Array<'Vega' | 'AB' | null>(n).fill(null))[i] = system;
		}
		if (star.wesenheit_ratio !== undefined && star.wesenheit_ratio !== null) {
			(wesenheitRatios ??= new Float64Array(n).fill(Number.NaN))[i] = problems.number(
				'wesenheit_ratio',
				star.wesenheit_ratio,
				'positive'
			);
		}
	}
	if (problems.count > 0) {
		const listed = problems.listed.length;
		const more = problems.count > listed ? ` (the first ${listed} of ${problems.count} are listed)` : '';
		throw new RegistryError(
			422,
			'validation-failed',
			`${problems.count} problems in the stars${more}.`,
			problems.listed
		);
	}
	return {
		ids,
		periodDays,
		mag,
		magErr,
		// A column nobody filled in is left out, so the engine does not ask for an extinction law it will not use.
		...(anyEbv ? { ebv, ebvErr } : {}),
		...(anyFeh ? { feh, fehErr } : {}),
		...(populations ? { populations } : {}),
		...(magnitudeSystems ? { magnitudeSystems } : {}),
		...(wesenheitRatios ? { wesenheitRatios } : {})
	};
}

/** Everything the distances computation needs, after the envelope is checked. */
export interface DistanceInputs {
	relation: string;
	stars: readonly unknown[];
	extinctionLaw?: ExtinctionLawId;
	rV?: number;
	clipSigma?: number | null;
	shared?: HostSharedInputs;
}

/** Checks a parsed JSON body's envelope (the stars are checked later, column by column). */
export function readDistanceEnvelope(body: unknown): DistanceInputs {
	const parsed = EnvelopeSchema.safeParse(body);
	if (!parsed.success) {
		throw new RegistryError(
			422,
			'validation-failed',
			'The request body does not match the schema.',
			parsed.error.issues.map((issue) => ({ path: issue.path.map(String).join('/'), message: issue.message }))
		);
	}
	const { relation, stars, extinction_law, r_v, clip_sigma } = parsed.data;
	const { foreground_ebv_err, host_metallicity, adopted_slope_err, crowding_correction } = parsed.data;
	if (stars.length > MAX_DISTANCE_STARS) {
		throw new RegistryError(
			413,
			'too-many-stars',
			`At most ${MAX_DISTANCE_STARS} stars a request; this one has ${stars.length}.`
		);
	}
	if (stars.length === 0) {
		throw new RegistryError(422, 'validation-failed', 'No stars.', [
			{ path: 'stars', message: 'needs at least one star' }
		]);
	}
	const shared: HostSharedInputs = {
		...(foreground_ebv_err === undefined ? {} : { foregroundEbvError: foreground_ebv_err }),
		...(host_metallicity
			? {
					metallicity: {
						value: host_metallicity.value,
						error: host_metallicity.error,
						scale: host_metallicity.scale,
						...(host_metallicity.conversion_error === undefined
							? {}
							: { conversionError: host_metallicity.conversion_error })
					}
				}
			: {}),
		...(adopted_slope_err === undefined ? {} : { slopeError: adopted_slope_err }),
		...(crowding_correction
			? { crowding: { correction: crowding_correction.value, error: crowding_correction.error } }
			: {})
	};
	return { relation, stars, extinctionLaw: extinction_law, rV: r_v, clipSigma: clip_sigma, shared };
}

export interface DistanceComputation {
	relation: DistanceResponse['relation'];
	settings: DistanceResponse['settings'];
	ids: string[];
	batch: HostBatchResult;
	warnings: CalibrationWarning[];
}

/**
 * Resolves the pinned version as `reader` may see it (404 otherwise), checks the stars and runs the
 * engine. The API route and the worksheet's form actions both call this.
 */
export async function computeDistances(
	em: EntityManager,
	reader: Actor | null,
	inputs: DistanceInputs
): Promise<DistanceComputation> {
	const ref = parseRef(inputs.relation);
	if (!ref)
		throw new RegistryError(404, 'not-found', `"${inputs.relation}" is not a reference of the form slug@version.`);
	const { version, lifecycle } = await findVersion(em, reader, ref.slug, ref.number);
	// The standing among the versions this reader may see: a newer version still under embargo is not told.
	const { standings } = await listVersions(em, reader, ref.slug);
	const status = lifecycle.status === 'deprecated' ? 'deprecated' : (standings.get(ref.number) ?? lifecycle.status);
	const successor = visibleOrNull(standings, lifecycle.successorNumber);
	const columns = readStarColumns(inputs.stars);
	const content = version.content as unknown as RelationVersionContent;
	const relation = relationFromContent(content);
	refuseOtherPhotometricSystems(columns, content.magnitude_system, content.band, content as unknown);
	let batch: HostBatchResult;
	let record: RelationBudgetRecord;
	try {
		record = relationBudgetRecord(content);
		batch = hostDistanceBatch(relation, columns, {
			extinctionLaw: inputs.extinctionLaw,
			rV: inputs.rV,
			clipSigma: inputs.clipSigma,
			relationTerms: record.terms,
			shared: inputs.shared
		});
	} catch (error) {
		if (error instanceof CalibrationInputError) {
			throw new RegistryError(
				422,
				'validation-failed',
				error.message,
				error.issues.map((issue) => ({ path: snakeField(issue.field), message: issue.message }))
			);
		}
		if (error instanceof ExtinctionNotApplicableError) {
			throw new RegistryError(422, error.code.replaceAll('_', '-'), error.message, [
				{ path: 'stars', message: `${error.message} (send the stars without ebv, or choose another relation)` }
			]);
		}
		throw error;
	}
	const wesenheitRatio = relationWesenheitRatio(content.band, content);
	const warnings = [
		...photometricSystemWarnings(columns, content.magnitude_system, content.band, wesenheitRatio),
		...budgetWarnings(content, record),
		...batch.warnings
	];
	if (status === 'deprecated') {
		warnings.unshift({
			code: 'version_deprecated',
			message: `${content.ref} is deprecated: ${lifecycle.deprecationReason ?? 'no reason given'}`,
			field: 'relation',
			details: { successor: successor === null ? null : `${ref.slug}@${successor}` }
		});
	} else if (status === 'superseded') {
		warnings.unshift({
			code: 'version_superseded',
			message: `${content.ref} has been superseded by a newer version; pinned results stay reproducible`,
			field: 'relation'
		});
	}
	const law =
		columns.ebv && getBand(content.band).kind === 'single' ? (inputs.extinctionLaw ?? relation.extinctionLaw) : null;
	return {
		relation: {
			ref: content.ref,
			digest: version.digest,
			status,
			band: content.band,
			population: content.population,
			magnitude_system: content.magnitude_system,
			validity: content.validity,
			coefficients: content.coefficients,
			pivot_log_period: content.pivot_log_period,
			pivot_feh: content.pivot_feh,
			wesenheit_ratio: wesenheitRatio,
			engine_version: content.engine_version,
			systematics_recorded: record.recorded
		},
		settings: settingsOf(inputs, law, law === null ? null : (inputs.rV ?? relation.rV ?? 3.1)),
		ids: columns.ids,
		batch,
		warnings
	};
}

function settingsOf(
	inputs: DistanceInputs,
	law: ExtinctionLawId | null,
	rV: number | null
): DistanceResponse['settings'] {
	const shared = inputs.shared ?? {};
	return {
		extinction_law: law,
		r_v: rV,
		clip_sigma: inputs.clipSigma === undefined ? 3 : inputs.clipSigma,
		foreground_ebv_err: shared.foregroundEbvError ?? null,
		host_metallicity: shared.metallicity
			? {
					value: shared.metallicity.value,
					error: shared.metallicity.error,
					scale: shared.metallicity.scale,
					conversion_error: shared.metallicity.conversionError ?? null
				}
			: null,
		adopted_slope_err: shared.slopeError ?? null,
		crowding_correction: shared.crowding ? { value: shared.crowding.correction, error: shared.crowding.error } : null
	};
}

/** The R the relation's Wesenheit band was frozen with (the catalogue's before it was recorded). */
function relationWesenheitRatio(bandId: string, content: unknown): number | null {
	const band = getBand(bandId);
	if (band.kind !== 'wesenheit') return null;
	const frozen = (content as { wesenheit_ratio?: unknown }).wesenheit_ratio;
	return typeof frozen === 'number' ? frozen : band.ratio;
}

/** R values closer than this are the same R written with different rounding. */
const RATIO_TOLERANCE = 5e-4;

/**
 * A star in another magnitude system, or a Wesenheit magnitude built with another R, would give a
 * distance off by a constant: refused (422), naming each star and field.
 */
function refuseOtherPhotometricSystems(
	columns: StarColumnsInput,
	system: 'Vega' | 'AB',
	bandId: string,
	content: unknown
): void {
	const ratio = relationWesenheitRatio(bandId, content);
	const problems = new StarProblems();
	columns.magnitudeSystems?.forEach((given, i) => {
		if (given === null || given === system) return;
		problems.index = i;
		problems.id = columns.ids[i];
		problems.add(
			'magnitude_system',
			`is ${given} but the relation's ${bandId} magnitudes are ${system}; convert the magnitude or choose a relation in ${given}`
		);
	});
	columns.wesenheitRatios?.forEach((given, i) => {
		if (Number.isNaN(given)) return;
		problems.index = i;
		problems.id = columns.ids[i];
		if (ratio === null) problems.add('wesenheit_ratio', `does not apply: the relation is in the single band ${bandId}`);
		else if (Math.abs(given - ratio) > RATIO_TOLERANCE)
			problems.add(
				'wesenheit_ratio',
				`is ${given} but the relation's ${bandId} was calibrated with R = ${ratio}; recompute W with R = ${ratio} or choose another relation`
			);
	});
	if (problems.count > 0) {
		throw new RegistryError(
			422,
			'photometric-system-mismatch',
			`${problems.count} stars are not in the relation's photometric system.`,
			problems.listed
		);
	}
}

/** Stars that did not say their magnitude system or Wesenheit R are taken to match the relation: said once. */
function photometricSystemWarnings(
	columns: StarColumnsInput,
	system: 'Vega' | 'AB',
	bandId: string,
	ratio: number | null
): CalibrationWarning[] {
	const n = columns.ids.length;
	const warnings: CalibrationWarning[] = [];
	const unsaidSystem = columns.magnitudeSystems ? columns.magnitudeSystems.filter((s) => s === null).length : n;
	if (unsaidSystem > 0) {
		warnings.push({
			code: 'magnitude_system_assumed',
			message: `${unsaidSystem} of ${n} stars did not give a magnitude_system; their magnitudes were taken to be ${system}, the relation's system`,
			field: 'magnitude_system',
			details: { count: unsaidSystem, assumed: system }
		});
	}
	if (ratio !== null) {
		const unsaidRatio = columns.wesenheitRatios ? columns.wesenheitRatios.filter(Number.isNaN).length : n;
		if (unsaidRatio > 0) {
			warnings.push({
				code: 'wesenheit_ratio_assumed',
				message: `${unsaidRatio} of ${n} stars did not give a wesenheit_ratio; their ${bandId} magnitudes were taken to use R = ${ratio}, the relation's`,
				field: 'wesenheit_ratio',
				details: { count: unsaidRatio, assumed: ratio }
			});
		}
	}
	return warnings;
}

/** What the version records, or does not, about its own error budget. */
function budgetWarnings(content: RelationVersionContent, record: RelationBudgetRecord): CalibrationWarning[] {
	if (!record.recorded) {
		return [
			{
				code: 'systematics_not_recorded',
				message: `${content.ref} (engine ${content.engine_version}) was frozen before systematics were recorded: its anchor, parallax zero-point and slope systematics are not in mu0_err_sys`,
				field: 'relation',
				details: { engine_version: content.engine_version }
			}
		];
	}
	const quality = record.fitQuality;
	if (quality?.errorsTooSmall) {
		return [
			{
				code: 'relation_errors_too_small',
				message: `the fit behind ${content.ref} has χ²/dof = ${quality.reducedChiSquare?.toFixed(2) ?? 'n/a'}: its per-star errors were too small${quality.covarianceScaled ? ', and its covariance was scaled by χ²/dof' : ', and its covariance was not scaled'}`,
				field: 'relation',
				details: {
					reduced_chi_square: quality.reducedChiSquare,
					degrees_of_freedom: quality.degreesOfFreedom,
					covariance_scaled: quality.covarianceScaled ? 'yes' : 'no'
				}
			}
		];
	}
	return [];
}

function snakeField(field: string): string {
	return field === 'rV' ? 'r_v' : field === 'law' ? 'extinction_law' : field;
}

function starResult(computation: DistanceComputation, i: number): DistanceStarResult {
	const { batch, ids } = computation;
	return {
		id: ids[i],
		log_period: batch.logPeriod[i],
		abs_mag: batch.absMag[i],
		abs_mag_err: batch.absMagErr[i],
		mu0: batch.mu0[i],
		mu0_err: batch.mu0Err[i],
		distance_mpc: batch.distanceMpc[i],
		distance_mpc_err: batch.distanceMpcErr[i],
		distance_mpc_p16: distanceFromModulus(batch.mu0[i] - batch.mu0Err[i], 'Mpc'),
		distance_mpc_p84: distanceFromModulus(batch.mu0[i] + batch.mu0Err[i], 'Mpc'),
		rejected: batch.rejectedMask[i] === 1,
		warnings: batch.starWarnings[i] as CalibrationWarning[]
	};
}

function combinedOf(computation: DistanceComputation): DistanceResponse['combined'] {
	const c = computation.batch.combined;
	return {
		mu0: c.mu0.value,
		mu0_err_stat: c.mu0.statistical,
		mu0_err_sys: c.mu0.systematic,
		mu0_err: c.mu0.total,
		distance_mpc: c.distanceMpc.value,
		distance_mpc_err: c.distanceMpc.error,
		distance_mpc_p16: c.distanceIntervalMpc.p16,
		distance_mpc_p84: c.distanceIntervalMpc.p84,
		n_used: c.nUsed,
		n_assumed_metallicity: c.assumedMetallicityCount,
		rejected: c.rejected.map((r) => ({ id: r.star, reason: r.reason, standardized_residual: r.standardizedResidual })),
		error_budget: c.errorBudget.map((term) => ({ id: term.id, label: term.label, value: term.value })),
		mean_log_period: c.meanLogPeriod,
		mean_feh: c.meanFeh,
		reduced_chi_square: c.reducedChiSquare,
		iterations: c.iterations
	};
}

/** The response as plain data (for page loads and actions). */
export function toDistanceResponse(computation: DistanceComputation): DistanceResponse {
	return {
		relation: computation.relation,
		settings: computation.settings,
		distance_convention: DISTANCE_CONVENTION,
		results: computation.ids.map((_, i) => starResult(computation, i)),
		combined: combinedOf(computation),
		warnings: computation.warnings
	};
}
