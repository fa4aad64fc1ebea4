/**
 * The frozen content of an approved relation version and of a calibrator-set revision, exactly as the
 * read API serves it (snake_case). Once frozen it never changes; its digest (digest.ts) is computed over
 * it. Every key is always present: absent values are written as null, never left out.
 */
import { z } from 'zod';
import { REFIT_METHODS, WEIGHTED_COVARIANCE_SCALINGS } from './fit/types';
import { CALIBRATION_SYSTEMATIC_IDS } from './systematics';
import {
	CalibrationInputError,
	EXTINCTION_LAW_IDS,
	POPULATION_IDS,
	type CoefficientAxis,
	type InputIssue,
	type Relation
} from './types';

const SLUG = /^[a-z0-9]+(?:-[a-z0-9]+)*$/;
const DIGEST = /^sha256:[0-9a-f]{64}$/;
const ID = /^[a-z][a-z0-9_]*$/;
const ORCID = /^\d{4}-\d{4}-\d{4}-\d{3}[\dX]$/;

const finite = z.number();
const nonNegative = z.number().nonnegative();
const slug = z.string().regex(SLUG, 'must be a lowercase slug (a-z, 0-9, single hyphens)');
const stableId = z.string().regex(ID, 'must be a snake_case id');
/** A calibrator field name: snake_case, except that band ids keep their case (mag_V, mag_err_W_VI). */
const fieldName = z.string().regex(/^[a-z][A-Za-z0-9_]*$/, 'must be a Candlebook field name');
const utcTimestamp = z.iso.datetime({ offset: false, local: false });
export const digestString = z.string().regex(DIGEST, 'must be "sha256:" followed by 64 lowercase hex digits');

const coefficientAxis = z.enum([
	'zero_point',
	'slope',
	'metallicity_term',
	'parallax_offset'
] satisfies CoefficientAxis[]);

export const RELATION_FORMS = ['period_luminosity', 'period_luminosity_metallicity'] as const;

const fitSpecSchema = z.strictObject({
	method: z.enum(REFIT_METHODS),
	anchor: z.enum(['parallax', 'host']),
	/** The rule a weighted fit's covariance was scaled by (see fit/types.ts); null for ols. */
	weighted_covariance: z.enum(WEIGHTED_COVARIANCE_SCALINGS).nullable(),
	fixed_slope: finite.nullable(),
	fixed_zero_point: finite.nullable(),
	clipping: z.strictObject({ sigma: z.number().positive(), max_iterations: z.number().int().positive() }).nullable(),
	extinction_law: z.enum(EXTINCTION_LAW_IDS).nullable(),
	r_v: z.number().positive().nullable(),
	parallax_offset: z.strictObject({ mode: z.enum(['given', 'fitted']), value: finite, error: nonNegative }).nullable(),
	bootstrap: z
		.strictObject({
			resamples: z.number().int().positive(),
			generator: z.string().min(1),
			seed: z.number().int(),
			/** Central probability of the percentile intervals. */
			level: z.number().gt(0).lt(1)
		})
		.nullable(),
	population: z.enum(POPULATION_IDS),
	period_filter: z.strictObject({
		log_period_min: finite.nullable(),
		log_period_max: finite.nullable()
	}),
	/** Whether first-overtone periods were fundamentalised before fitting. */
	fundamentalised: z.boolean(),
	/** σ_int held fixed inside a parallax-space fit; null for the other methods. */
	assumed_intrinsic_scatter: nonNegative.nullable(),
	/** How ml_scatter estimated σ_int (null for the other methods). Engine ≥ 2 only: engine 1 always used ML. */
	intrinsic_scatter_estimator: z.enum(['ml', 'reml']).nullable().optional()
});

/** Shared error terms of the calibration (engine ≥ 2); see systematics.ts. */
export const systematicsSchema = z.strictObject({
	terms: z.array(
		z.strictObject({
			id: z.enum(CALIBRATION_SYSTEMATIC_IDS),
			label: z.string().min(1),
			value: finite.nullable(),
			error: nonNegative,
			effect: z.strictObject({ zero_point: finite, slope: finite, metallicity_term: finite.nullable() })
		})
	)
});

/** χ²/dof of the fit and whether the covariance was scaled by it (engine ≥ 2); see fit/fit-quality.ts. */
export const fitQualitySchema = z.strictObject({
	reduced_chi_square: nonNegative.nullable(),
	degrees_of_freedom: z.number().int(),
	covariance_scaled: z.boolean(),
	errors_too_small: z.boolean()
});

/** Keys that versions frozen by engine 2 and later carry and engine 1.x versions do not. */
export const ENGINE_2_CONTENT_KEYS = ['systematics', 'fit_quality', 'wesenheit_ratio'] as const;

/**
 * The same content in the shape engine 1.0.0 froze: without the keys engine 2 added (at the top and
 * in `fit`). For tests and checks that rebuild what an older version looks like.
 */
export function inEngineOneShape<T extends RelationVersionContent>(content: T): T {
	const copy: Record<string, unknown> = { ...content, engine_version: '1.0.0' };
	for (const key of ENGINE_2_CONTENT_KEYS) delete copy[key];
	const { intrinsic_scatter_estimator: _estimator, ...fit } = content.fit;
	return { ...copy, fit } as T;
}

/** The major number of an engine version string ("2.0.0" → 2). */
export function engineMajor(engineVersion: string): number {
	return Number.parseInt(engineVersion.split('.')[0], 10);
}

export const relationVersionContentSchema = z
	.strictObject({
		ref: z.string().regex(/^[a-z0-9]+(?:-[a-z0-9]+)*@[1-9]\d*$/, 'must be "slug@version"'),
		version: z.number().int().positive(),
		band: z.string().min(1),
		population: z.enum(POPULATION_IDS),
		magnitude_system: z.enum(['Vega', 'AB']),
		form: z.enum(RELATION_FORMS),
		coefficients: z.strictObject({
			zero_point: finite,
			slope: finite,
			metallicity_term: finite.nullable()
		}),
		pivot_log_period: finite,
		pivot_feh: finite,
		covariance: z.strictObject({
			axes: z.array(coefficientAxis).min(1),
			matrix: z.array(z.array(finite))
		}),
		intrinsic_scatter: nonNegative,
		n_used: z.number().int().nonnegative(),
		rejected: z.array(
			z.strictObject({ star: z.string().min(1), reason: stableId, standardized_residual: finite.nullable() })
		),
		validity: z.strictObject({
			log_period_min: finite,
			log_period_max: finite,
			feh_min: finite.nullable(),
			feh_max: finite.nullable()
		}),
		fit: fitSpecSchema,
		engine_version: z.string().min(1),
		calibrator_set: z.strictObject({
			slug,
			revision: z.number().int().positive(),
			digest: digestString
		}),
		approved_by: z
			.array(
				z.strictObject({ name: z.string().min(1), orcid: z.string().regex(ORCID, 'must be an ORCID iD').nullable() })
			)
			.min(1),
		approved_at: utcTimestamp,
		/** Engine ≥ 2 only (absent from engine 1.x versions, which read as "systematics not recorded"). */
		systematics: systematicsSchema.optional(),
		fit_quality: fitQualitySchema.optional(),
		/** R of the version's Wesenheit band; null for a single band. Engine ≥ 2 only. */
		wesenheit_ratio: z.number().positive().nullable().optional()
	})
	.superRefine((content, ctx) => {
		const issue = (path: (string | number)[], message: string) => ctx.addIssue({ code: 'custom', path, message });
		const recordsBudget = engineMajor(content.engine_version) >= 2;
		for (const key of ENGINE_2_CONTENT_KEYS) {
			if (recordsBudget && content[key] === undefined) {
				issue([key], `is required from engine 2 on (write null for an absent value)`);
			}
			if (!recordsBudget && content[key] !== undefined) {
				issue([key], `is not part of versions frozen by engine ${content.engine_version}`);
			}
		}
		if (recordsBudget !== (content.fit.intrinsic_scatter_estimator !== undefined)) {
			issue(
				['fit', 'intrinsic_scatter_estimator'],
				recordsBudget
					? 'is required from engine 2 on'
					: `is not part of versions frozen by engine ${content.engine_version}`
			);
		}
		const withGamma = content.form === 'period_luminosity_metallicity';
		content.systematics?.terms.forEach((term, i) => {
			if ((term.effect.metallicity_term !== null) !== withGamma) {
				issue(
					['systematics', 'terms', i, 'effect', 'metallicity_term'],
					`must be ${withGamma ? 'a number' : 'null'} for form ${content.form}`
				);
			}
		});
		if (content.ref.split('@')[1] !== String(content.version)) issue(['ref'], 'version in ref must equal version');
		const hasGamma = content.coefficients.metallicity_term !== null;
		if (hasGamma !== (content.form === 'period_luminosity_metallicity')) {
			issue(['coefficients', 'metallicity_term'], `must be ${hasGamma ? 'null' : 'a number'} for form ${content.form}`);
		}
		if (content.population !== content.fit.population) issue(['fit', 'population'], 'must equal population');
		const { axes, matrix } = content.covariance;
		if (new Set(axes).size !== axes.length) issue(['covariance', 'axes'], 'must not repeat an axis');
		if (matrix.length !== axes.length || matrix.some((row) => row.length !== axes.length)) {
			issue(['covariance', 'matrix'], `must be ${axes.length} × ${axes.length}`);
		} else {
			matrix.forEach((row, i) =>
				row.forEach((value, j) => {
					if (j > i && value !== matrix[j][i]) issue(['covariance', 'matrix', i, j], 'must be symmetric');
				})
			);
			if (matrix.some((row, i) => row[i] < 0)) issue(['covariance', 'matrix'], 'variances must be ≥ 0');
		}
		if (content.validity.log_period_min > content.validity.log_period_max) {
			issue(['validity', 'log_period_min'], 'must not exceed log_period_max');
		}
		const { feh_min: fehMin, feh_max: fehMax } = content.validity;
		if (fehMin !== null && fehMax !== null && fehMin > fehMax)
			issue(['validity', 'feh_min'], 'must not exceed feh_max');
	});
export type RelationVersionContent = z.infer<typeof relationVersionContentSchema>;

const cellValue = z.union([z.number(), z.string(), z.boolean(), z.null()]);

export const calibratorRevisionContentSchema = z
	.strictObject({
		calibrator_set: slug,
		revision: z.number().int().positive(),
		source_file: z.strictObject({
			name: z.string().min(1),
			media_type: z.string().min(1),
			digest: digestString
		}),
		/** How the uploaded file's columns map to Candlebook fields, and their units (null when unitless). */
		columns: z
			.array(z.strictObject({ field: fieldName, source_column: z.string().min(1), unit: z.string().min(1).nullable() }))
			.min(1),
		rows: z.array(z.strictObject({ star: z.string().min(1), values: z.record(z.string(), cellValue) })),
		/**
		 * Values taken from light-curve analyses, each with the analysis it came from. Absent when the
		 * table was uploaded as it is, so such revisions keep the content (and digest) they always had.
		 */
		value_sources: z
			.array(
				z.strictObject({
					star: z.string().min(1),
					field: fieldName,
					value: finite,
					replaced: cellValue,
					light_curve: z.strictObject({
						result: z.uuid(),
						upload: z.uuid(),
						source_digest: digestString,
						band: z.string().min(1).nullable(),
						quantity: z.enum(['period_days', 'period_err_days', 'mean_mag_intensity', 'mean_mag_intensity_err']),
						engine_version: z.string().min(1)
					})
				})
			)
			.min(1)
			.optional()
	})
	.superRefine((content, ctx) => {
		const fields = content.columns.map((column) => column.field);
		if (new Set(fields).size !== fields.length) {
			ctx.addIssue({ code: 'custom', path: ['columns'], message: 'must not map two columns to one field' });
		}
		const expected = [...fields].sort().join(',');
		const seen = new Set<string>();
		content.rows.forEach((row, i) => {
			if (seen.has(row.star)) ctx.addIssue({ code: 'custom', path: ['rows', i, 'star'], message: 'duplicate star' });
			seen.add(row.star);
			if (Object.keys(row.values).sort().join(',') !== expected) {
				ctx.addIssue({
					code: 'custom',
					path: ['rows', i, 'values'],
					message: 'must have exactly one value per mapped column (write null for a missing value)'
				});
			}
		});
		const rowsByStar = new Map(content.rows.map((row) => [row.star, row]));
		const sourced = new Set<string>();
		content.value_sources?.forEach((source, i) => {
			const key = `${source.star}\u0000${source.field}`;
			if (sourced.has(key)) {
				ctx.addIssue({ code: 'custom', path: ['value_sources', i], message: 'names a value twice' });
			}
			sourced.add(key);
			if (rowsByStar.get(source.star)?.values[source.field] !== source.value) {
				ctx.addIssue({
					code: 'custom',
					path: ['value_sources', i, 'value'],
					message: 'must equal the value of that star and field in rows'
				});
			}
		});
	});
export type CalibratorRevisionContent = z.infer<typeof calibratorRevisionContentSchema>;

/** Paths of every key whose value is undefined (which JSON would silently drop). */
export function findUndefinedPaths(value: unknown, path = ''): string[] {
	if (value === undefined) return [path || '(root)'];
	if (Array.isArray(value)) return value.flatMap((item, i) => findUndefinedPaths(item, `${path}[${i}]`));
	if (value !== null && typeof value === 'object') {
		return Object.entries(value).flatMap(([key, item]) => findUndefinedPaths(item, path ? `${path}.${key}` : key));
	}
	return [];
}

function parseWith<T>(schema: z.ZodType<T>, input: unknown, label: string | null): T {
	const undefinedPaths = findUndefinedPaths(input);
	const issues: InputIssue[] = undefinedPaths.map((field) => ({
		star: label,
		field,
		message: 'is undefined; write null for an absent value'
	}));
	const result = schema.safeParse(input);
	if (!result.success) {
		for (const issue of result.error.issues) {
			const field = issue.path.map(String).join('.') || '(root)';
			if (!issues.some((known) => known.field === field)) issues.push({ star: label, field, message: issue.message });
		}
	}
	if (issues.length > 0) throw new CalibrationInputError(issues);
	return (result as { data: T }).data;
}

/** Validates relation-version content; throws CalibrationInputError naming every bad field. */
export function parseRelationVersionContent(input: unknown): RelationVersionContent {
	const ref = (input as { ref?: unknown } | null)?.ref;
	return parseWith(relationVersionContentSchema, input, typeof ref === 'string' ? ref : null);
}

/** Validates calibrator-revision content; throws CalibrationInputError naming every bad field. */
export function parseCalibratorRevisionContent(input: unknown): CalibratorRevisionContent {
	return parseWith(calibratorRevisionContentSchema, input, null);
}

/** The relation a frozen version describes, in the shape the apply functions take. */
export function relationFromContent(content: RelationVersionContent): Relation {
	return {
		bandId: content.band,
		population: content.population,
		magnitudeSystem: content.magnitude_system,
		coefficients: {
			zeroPoint: content.coefficients.zero_point,
			slope: content.coefficients.slope,
			metallicityTerm: content.coefficients.metallicity_term
		},
		pivotLogPeriod: content.pivot_log_period,
		pivotFeh: content.pivot_feh,
		covariance: { axes: [...content.covariance.axes], matrix: content.covariance.matrix.map((row) => [...row]) },
		intrinsicScatter: content.intrinsic_scatter,
		validity: {
			logPeriodMin: content.validity.log_period_min,
			logPeriodMax: content.validity.log_period_max,
			fehMin: content.validity.feh_min,
			fehMax: content.validity.feh_max
		},
		extinctionLaw: content.fit.extinction_law,
		rV: content.fit.r_v
	};
}
