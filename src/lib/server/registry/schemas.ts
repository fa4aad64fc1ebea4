import { z } from 'zod';
import {
	EXTINCTION_LAW_IDS,
	POPULATION_IDS,
	REFIT_METHODS,
	RELATION_FORMS,
	WEIGHTED_COVARIANCE_SCALINGS
} from '../../calibration/index';
import { PROPOSAL_STATES } from '../../review/proposal-workflow';
import { registerApiSchema } from '../api/schema-registry';
import { ANCHOR_TYPES, RELATION_VISIBILITIES } from '../entities/relation.entity';
import { REVIEW_DECISIONS } from '../entities/proposal-comment.entity';

/** Request schemas of the registry's write API (snake_case on the wire). */
const slug = z
	.string()
	.min(2)
	.max(64)
	.regex(/^[a-z0-9]+(?:-[a-z0-9]+)*$/, 'must be a lowercase slug (a-z, 0-9, single hyphens)');
// SPDX licence expression: ids joined by AND / OR / WITH, optionally in parentheses (SPDX spec, annex D).
const spdx = z
	.string()
	.max(64)
	.regex(
		/^\(?[A-Za-z0-9.+-]+\)?(?:\s+(?:AND|OR|WITH)\s+\(?[A-Za-z0-9.+-]+\)?)*$/,
		'must be an SPDX licence id or expression, e.g. CC-BY-4.0'
	);

export const CreateCalibratorSetSchema = registerApiSchema(
	z.strictObject({
		slug,
		title: z.string().trim().min(1).max(200),
		description: z.string().max(20_000).default(''),
		group: slug,
		licence: spdx,
		citations: z.array(z.string().trim().min(1).max(2000)).max(50).default([]),
		visibility: z.enum(RELATION_VISIBILITIES).default('public')
	}),
	{ id: 'CreateCalibratorSet', description: 'A new calibrator set owned by a group.' }
);

export const ColumnMappingSchema = registerApiSchema(
	z.record(
		z.string().min(1).max(200),
		z.strictObject({
			field: z.string().min(1).max(64).nullable(),
			unit: z.string().min(1).max(32).nullable().optional()
		})
	),
	{
		id: 'ColumnMapping',
		description:
			'For each non-canonical header: the Candlebook field it fills (null to ignore the column) and the unit of its values.'
	}
);

export const CreateRelationSchema = registerApiSchema(
	z.strictObject({
		slug,
		title: z.string().trim().min(1).max(200),
		description: z.string().max(20_000).default(''),
		band: z.string().min(1).max(16),
		population: z.enum(POPULATION_IDS),
		anchor_type: z.enum(ANCHOR_TYPES),
		group: slug,
		visibility: z.enum(RELATION_VISIBILITIES).default('public'),
		required_approvals: z.number().int().min(1).max(10).nullable().default(null),
		magnitude_system: z.enum(['Vega', 'AB']).nullable().default(null)
	}),
	{ id: 'CreateRelation', description: 'A new relation in one band and population.' }
);

const finiteOrNull = z.number().nullable().default(null);

export const FitRequestSchema = registerApiSchema(
	z.strictObject({
		calibrator_set: slug,
		revision: z.number().int().positive(),
		band: z.string().min(1).max(16),
		population: z.enum(POPULATION_IDS),
		anchor: z.enum(['parallax', 'host']),
		form: z.enum(RELATION_FORMS).default('period_luminosity'),
		method: z.enum(REFIT_METHODS),
		pivot_log_period: z.number().default(1),
		pivot_feh: z.number().default(0),
		period_filter: z
			.strictObject({ log_period_min: finiteOrNull, log_period_max: finiteOrNull })
			.default({ log_period_min: null, log_period_max: null }),
		fundamentalise: z.boolean().default(false),
		fixed_slope: finiteOrNull,
		fixed_zero_point: finiteOrNull,
		clipping: z
			.strictObject({ sigma: z.number().positive(), max_iterations: z.number().int().positive().max(100) })
			.nullable()
			.default(null),
		extinction_law: z.enum(EXTINCTION_LAW_IDS).nullable().default(null),
		r_v: z.number().positive().nullable().default(null),
		parallax_offset: z
			.strictObject({ mode: z.enum(['given', 'fitted']), value: z.number(), error: z.number().nonnegative() })
			.nullable()
			.default(null),
		bootstrap: z
			.strictObject({
				resamples: z.number().int().positive().max(100_000),
				seed: z
					.number()
					.int()
					.min(0)
					.max(2 ** 32 - 1),
				level: z.number().gt(0).lt(1).default(0.68)
			})
			.nullable()
			.default(null),
		/**
		 * Null: the method's own rule (wls scales by χ²/dof when it exceeds 1; ml_scatter takes the errors as
		 * they are, σ_int absorbing the excess). `absolute` keeps a wls covariance unscaled only when asked.
		 */
		weighted_covariance: z.enum(WEIGHTED_COVARIANCE_SCALINGS).nullable().default(null),
		assumed_intrinsic_scatter: z.number().nonnegative().nullable().default(null),
		/**
		 * How ml_scatter estimates σ_int. Null: `reml`, unbiased where `ml` is low by about (n − p)/n for few
		 * calibrators.
		 */
		intrinsic_scatter_estimator: z.enum(['ml', 'reml']).nullable().default(null),
		/** 1σ error of `fixed_slope`, frozen as a systematic of the zero point. */
		fixed_slope_error: z.number().nonnegative().nullable().default(null),
		/** R of the Wesenheit band other than the catalogue's, with the reason (e.g. the law and R_V behind it). */
		wesenheit_ratio: z
			.strictObject({ value: z.number().positive(), reason: z.string().trim().min(1).max(500) })
			.nullable()
			.default(null)
	}),
	{
		id: 'FitRequest',
		description:
			'A fit spec: calibrator set revision, band, population and period filter, form, method, clipping, extinction law and R_V, parallax offset, bootstrap size and seed.'
	}
);
export type FitRequest = z.infer<typeof FitRequestSchema>;

const markdown = z.string().max(50_000);
const embargo = z.iso
	.datetime({ offset: true })
	.transform((value) => new Date(value))
	.nullable();

export const CreateProposalSchema = registerApiSchema(
	z.strictObject({
		fit: z.uuid(),
		title: z.string().trim().min(1).max(200),
		rationale: markdown.default(''),
		embargo_until: embargo.default(null),
		submit: z.boolean().default(false)
	}),
	{ id: 'CreateProposal', description: 'Proposes a finished fit as the relation’s next version.' }
);

export const EditProposalSchema = registerApiSchema(
	z
		.strictObject({
			fit: z.uuid().optional(),
			title: z.string().trim().min(1).max(200).optional(),
			rationale: markdown.optional(),
			embargo_until: embargo.optional()
		})
		.refine((value) => Object.keys(value).length > 0, 'change at least one field'),
	{ id: 'EditProposal', description: 'Changes a draft, or a proposal sent back for changes.' }
);

export const CommentSchema = registerApiSchema(z.strictObject({ body: markdown.min(1) }), {
	id: 'ProposalCommentRequest',
	description: 'A Markdown comment on an open proposal.'
});

export const ReviewSchema = registerApiSchema(
	z.strictObject({ decision: z.enum(REVIEW_DECISIONS), comment: markdown.default('') }),
	{ id: 'ReviewRequest', description: 'A reviewer’s decision, with an optional Markdown comment.' }
);

export const ProposalQuerySchema = z.object({
	relation: slug.optional(),
	state: z.enum(PROPOSAL_STATES).optional(),
	awaiting: z.literal('me').optional()
});

export const DeprecateSchema = registerApiSchema(
	z.strictObject({
		reason: z.string().trim().min(1).max(5000),
		successor: z.number().int().positive().nullable().default(null)
	}),
	{ id: 'DeprecateVersion', description: 'Deprecates a version with a reason and the version to use instead.' }
);
