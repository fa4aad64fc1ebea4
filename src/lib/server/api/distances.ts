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
import { hostDistanceBatch, type HostBatchResult } from '../../calibration/host-batch';
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
			population: z.enum(POPULATION_IDS).nullable().optional().describe('Classification of the star, if known.')
		})
		.strict(),
	{ id: 'DistanceStar', description: 'One Cepheid of a host galaxy: period, intensity-mean magnitude and reddening.' }
);

const requestShape = {
	relation: z.string().regex(/^[a-z0-9]+(?:-[a-z0-9]+)*@[1-9]\d{0,8}$/, 'must be "slug@version"'),
	extinction_law: z.enum(EXTINCTION_LAW_IDS).optional(),
	r_v: z.number().positive().optional(),
	clip_sigma: z.number().positive().nullable().optional().describe('σ-clipping threshold (default 3; null: none).')
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
	distance_mpc: z.number(),
	distance_mpc_err: z.number(),
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
			pivot_feh: z.number()
		}),
		settings: z.object({
			extinction_law: z.enum(EXTINCTION_LAW_IDS).nullable(),
			r_v: z.number().nullable(),
			clip_sigma: z.number().nullable()
		}),
		results: z.array(DistanceStarResultSchema),
		combined: z.object({
			mu0: z.number(),
			mu0_err_stat: z.number(),
			mu0_err_sys: z.number(),
			mu0_err: z.number(),
			distance_mpc: z.number(),
			distance_mpc_err: z.number(),
			n_used: z.number().int(),
			rejected: z.array(z.object({ id: z.string(), reason: z.string(), standardized_residual: z.number() })),
			systematic_terms: z.array(z.object({ name: z.string(), error: z.number() })),
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
		'422': { description: 'Bad stars (each named as stars/i/field) or an unusable extinction law', ...problemJson }
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
	'population'
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
		...(populations ? { populations } : {})
	};
}

/** Everything the distances computation needs, after the envelope is checked. */
export interface DistanceInputs {
	relation: string;
	stars: readonly unknown[];
	extinctionLaw?: ExtinctionLawId;
	rV?: number;
	clipSigma?: number | null;
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
	return { relation, stars, extinctionLaw: extinction_law, rV: r_v, clipSigma: clip_sigma };
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
	let batch: HostBatchResult;
	try {
		batch = hostDistanceBatch(relation, columns, {
			extinctionLaw: inputs.extinctionLaw,
			rV: inputs.rV,
			clipSigma: inputs.clipSigma
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
	const warnings = [...batch.warnings];
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
			pivot_feh: content.pivot_feh
		},
		settings: {
			extinction_law: law,
			r_v: law === null ? null : (inputs.rV ?? relation.rV ?? 3.1),
			clip_sigma: inputs.clipSigma === undefined ? 3 : inputs.clipSigma
		},
		ids: columns.ids,
		batch,
		warnings
	};
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
		n_used: c.nUsed,
		rejected: c.rejected.map((r) => ({ id: r.star, reason: r.reason, standardized_residual: r.standardizedResidual })),
		systematic_terms: c.systematicTerms.map((term) => ({ name: term.name, error: term.error })),
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
		results: computation.ids.map((_, i) => starResult(computation, i)),
		combined: combinedOf(computation),
		warnings: computation.warnings
	};
}
