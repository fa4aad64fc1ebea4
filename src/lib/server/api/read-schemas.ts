/** Request and response schemas of the read API (relations, versions, digests, stars, reproduce, citations), registered for the OpenAPI document. */
import { z } from 'zod';
import { digestString, isBandId, POPULATION_IDS, relationVersionContentSchema } from '../../calibration/index';
import { ANCHOR_TYPES, RELATION_VISIBILITIES } from '../entities/relation.entity';
import { VERSION_STATUSES } from '../entities/version-lifecycle.entity';
import { CATALOGUE_SORTS } from '../registry/relation-catalogue';
import { CITATION_MEDIA_TYPES, CITATION_STYLES } from '../registry/version-citation';
import { describeOperation, registerApiSchema } from './schema-registry';

const slug = z.string().regex(/^[a-z0-9]+(?:-[a-z0-9]+)*$/);
const ref = z.string().regex(/^[a-z0-9]+(?:-[a-z0-9]+)*@[1-9]\d*$/);
const timestamp = z.iso.datetime({ offset: true });
/** An absent query parameter and an empty one (`?band=`) mean the same: no filter. */
const optionalParam = <T extends z.ZodType>(schema: T) =>
	z.preprocess((value) => (value === '' ? undefined : value), schema.optional());

export const RELATION_STATES = ['active', 'proposed', 'retired'] as const;

export const RelationListQuerySchema = z.object({
	band: optionalParam(z.string().refine(isBandId, 'is not a band Candlebook knows')),
	population: optionalParam(z.enum(POPULATION_IDS)),
	anchor: optionalParam(z.enum(ANCHOR_TYPES)),
	state: optionalParam(z.enum(RELATION_STATES)),
	q: optionalParam(z.string().trim().min(1).max(200)),
	sort: optionalParam(z.enum(CATALOGUE_SORTS)).transform((value) => value ?? 'title'),
	cursor: optionalParam(z.string().max(2000)),
	limit: optionalParam(z.coerce.number().int().min(1).max(200)).transform((value) => value ?? 50)
});

export const CurrentVersionSchema = registerApiSchema(
	z.object({ version: z.number().int().positive(), ref, digest: digestString }),
	{ id: 'CurrentVersion', description: 'The version a relation’s readers should use now.' }
);

const relationSummaryShape = {
	slug,
	title: z.string(),
	band: z.string(),
	population: z.enum(POPULATION_IDS),
	magnitude_system: z.enum(['Vega', 'AB']),
	anchor_type: z.enum(ANCHOR_TYPES),
	group: slug,
	visibility: z.enum(RELATION_VISIBILITIES),
	state: z.enum(RELATION_STATES),
	current: CurrentVersionSchema.nullable(),
	version_count: z.number().int().nonnegative(),
	updated_at: timestamp
};

export const RelationSummarySchema = registerApiSchema(z.object(relationSummaryShape), {
	id: 'RelationSummary',
	description:
		'A relation in the catalogue: `active` has a current version, `proposed` has none approved yet, `retired` has every version deprecated. `updated_at` is its latest approval or deprecation, else its creation.'
});

export const RelationListSchema = registerApiSchema(
	z.object({ items: z.array(RelationSummarySchema), next_cursor: z.string().nullable() }),
	{
		id: 'RelationList',
		description: 'One page of the catalogue; pass `next_cursor` back as `cursor` for the next page.',
		responseFor: ['GET /api/v1/relations']
	}
);

export const VersionSummarySchema = registerApiSchema(
	z.object({
		ref,
		version: z.number().int().positive(),
		lifecycle: z.enum(VERSION_STATUSES),
		digest: digestString,
		approved_at: timestamp,
		deprecated_at: timestamp.nullable(),
		deprecation_reason: z.string().nullable(),
		successor: ref.nullable(),
		embargo_until: timestamp.nullable(),
		embargoed: z.boolean(),
		href: z.string()
	}),
	{
		id: 'VersionSummary',
		description:
			'A version’s standing, which may change (current, superseded, deprecated with reason and successor, embargo). Its frozen content is at `href`.'
	}
);

export const RelationDetailSchema = registerApiSchema(
	z.object({
		...relationSummaryShape,
		description: z.string(),
		description_html: z.string(),
		versions: z.array(VersionSummarySchema)
	}),
	{
		id: 'RelationDetail',
		description: 'A relation with every version the caller may see, oldest first.',
		responseFor: ['GET /api/v1/relations/{slug}']
	}
);

export const PinnedVersionSchema = registerApiSchema(
	z.strictObject({ ...relationVersionContentSchema.shape, digest: digestString }),
	{
		id: 'PinnedVersion',
		description:
			'A frozen version exactly as stored: RFC 8785 canonical JSON; `digest` is sha256 over the canonical JSON of every other member.',
		responseFor: [
			'GET /api/v1/relations/{slug}/versions/{n}',
			'GET /api/v1/pins/{ref}',
			'GET /api/v1/relations/{slug}/latest'
		]
	}
);

const singleBand = z.object({
	id: z.string(),
	kind: z.literal('single'),
	label: z.string(),
	photometric_system: z.string(),
	effective_wavelength_micron: z.number(),
	magnitude_system: z.enum(['Vega', 'AB']),
	broad: z.boolean()
});
const wesenheitBand = z.object({
	id: z.string(),
	kind: z.literal('wesenheit'),
	label: z.string(),
	wesenheit: z.object({
		magnitude_band: z.string(),
		colour_bands: z.array(z.string()),
		ratio: z.number(),
		ratio_source: z.string()
	})
});

export const BandListSchema = registerApiSchema(
	z.object({ items: z.array(z.discriminatedUnion('kind', [singleBand, wesenheitBand])), next_cursor: z.null() }),
	{
		id: 'BandList',
		description: 'The band catalogue: single bands and Wesenheit combinations W = m1 − R·(m2 − m3).',
		responseFor: ['GET /api/v1/bands']
	}
);

const versionNumber = z.coerce.number().int().min(1).max(999_999_999);

export const VersionDiffQuerySchema = z.object({ from: versionNumber, to: versionNumber });

export const CitationQuerySchema = z.object({
	style: optionalParam(z.enum(CITATION_STYLES)).transform((value) => value ?? 'text')
});

export const StarQuerySchema = z.object({
	q: z.string().trim().min(1).max(200),
	cursor: optionalParam(z.string().max(2000)),
	limit: optionalParam(z.coerce.number().int().min(1).max(200)).transform((value) => value ?? 50)
});

export const DigestTargetSchema = registerApiSchema(
	z.object({
		kind: z.enum(['relation_version', 'calibrator_revision']),
		ref: z.string(),
		href: z.string(),
		digest: digestString
	}),
	{
		id: 'DigestTarget',
		description: 'What a content digest names, and where to fetch it.',
		responseFor: ['GET /api/v1/digests/{digest}']
	}
);

const nullableNumber = z.number().nullable();

export const VersionComparisonSchema = registerApiSchema(
	z.object({
		from: z.object({ ref, digest: digestString }),
		to: z.object({ ref, digest: digestString }),
		coefficients: z.array(
			z.object({
				name: z.enum(['zero_point', 'slope', 'metallicity_term', 'intrinsic_scatter']),
				base: nullableNumber,
				base_error: nullableNumber,
				proposed: nullableNumber,
				proposed_error: nullableNumber,
				delta: nullableNumber,
				delta_over_sigma: nullableNumber
			})
		),
		settings: z.array(z.object({ path: z.string(), base: z.unknown(), proposed: z.unknown() })),
		predictions: z.array(
			z.object({
				log_period: z.number(),
				base: z.number(),
				base_error: z.number(),
				proposed: z.number(),
				proposed_error: z.number(),
				delta: z.number()
			})
		),
		rationale: z.array(z.object({ kind: z.enum(['same', 'added', 'removed']), text: z.string() })),
		calibrators: z
			.object({
				added: z.array(z.string()),
				removed: z.array(z.string()),
				changed: z.array(
					z.object({
						star: z.string(),
						previous_name: z.string().nullable(),
						matched_by: z.enum(['cross_id', 'star']),
						changes: z.array(z.unknown())
					})
				),
				unchanged_count: z.number().int(),
				fields_added: z.array(z.string()),
				fields_removed: z.array(z.string())
			})
			.nullable()
	}),
	{
		id: 'VersionComparison',
		description:
			'Two versions compared: `base` is `from`, `proposed` is `to`. Δ/σ treats the two fits as independent although they usually share calibrators, so it understates the significance of a change.',
		responseFor: ['GET /api/v1/relations/{slug}/diff']
	}
);

export const StarSearchSchema = registerApiSchema(
	z.object({
		q: z.string(),
		items: z.array(
			z.object({
				star: z.string(),
				cross_id: z.string().nullable(),
				calibrator_set: slug,
				revision: z.number().int().positive(),
				digest: digestString,
				href: z.string(),
				relation_versions: z.array(
					z.object({
						ref,
						relation: slug,
						version: z.number().int().positive(),
						digest: digestString,
						href: z.string(),
						usage: z.enum(['used', 'rejected', 'excluded', 'not_used']),
						reason: z.string().nullable(),
						detail: z.string().nullable(),
						standardized_residual: nullableNumber
					})
				)
			})
		),
		next_cursor: z.string().nullable()
	}),
	{
		id: 'StarSearch',
		description:
			'Calibrator revisions whose rows name the star (by `star` or `cross_id`, ignoring case), each with the relation versions fitted from it: `used`, `rejected` by σ-clipping, or `excluded` before the fit (population, period range).',
		responseFor: ['GET /api/v1/stars']
	}
);

export const ReproductionSchema = registerApiSchema(
	z.object({
		digest_matches: z.boolean(),
		digest: digestString,
		recomputed_digest: digestString,
		max_relative_difference: z.number().nonnegative(),
		differences: z.array(z.object({ path: z.string(), stored: z.unknown(), recomputed: z.unknown() }))
	}),
	{
		id: 'Reproduction',
		description:
			'The frozen fit spec rerun by the engine on the frozen calibrator revision, the content rebuilt and its digest recomputed (sha256 of the RFC 8785 canonical JSON without `digest`); every leaf that differs is listed.',
		responseFor: ['POST /api/v1/relations/{slug}/versions/{n}/reproduce']
	}
);

export const CslJsonSchema = registerApiSchema(z.array(z.record(z.string(), z.unknown())), {
	id: 'CslJson',
	description: 'CSL-JSON: a list of one `dataset` item.'
});

export const DataCiteMetadataSchema = registerApiSchema(
	z.object({
		types: z.object({ resourceTypeGeneral: z.string(), resourceType: z.string() }),
		titles: z.array(z.object({ title: z.string() })),
		creators: z.array(z.record(z.string(), z.unknown())),
		publisher: z.string(),
		publicationYear: z.number().int(),
		version: z.string(),
		url: z.string()
	}),
	{ id: 'DataCiteMetadata', description: 'DataCite Metadata Schema 4 attributes, ready to submit when minting a DOI.' }
);

export const CitationJsonSchema = registerApiSchema(z.union([CslJsonSchema, DataCiteMetadataSchema]), {
	id: 'CitationJson',
	description: 'A citation in one of the JSON styles: CSL-JSON or DataCite metadata.'
});

// What each read operation's OpenAPI entry says beyond its 200 JSON schema.
const NOT_VISIBLE = {
	description: 'No such resource, or one the caller may not see (private relation, embargoed version)',
	schema: 'Problem',
	mediaTypes: ['application/problem+json']
};
const BAD_QUERY = {
	description: 'A bad query parameter; `errors` names it',
	schema: 'Problem',
	mediaTypes: ['application/problem+json']
};
const NOT_MODIFIED = { description: 'The version is unchanged (If-None-Match matched the ETag)', mediaTypes: [] };
const IF_NONE_MATCH = {
	name: 'If-None-Match',
	in: 'header' as const,
	description: 'The ETag (the quoted digest) of a copy the client holds.'
};
const enumParam = (values: readonly string[]) => ({ type: 'string', enum: [...values] });

describeOperation('GET /api/v1/relations', {
	description:
		'The catalogue of relations the caller may see (group-private ones only for members and admins, or their tokens with read:private), keyset-paged.',
	parameters: [
		{ name: 'band', in: 'query', description: 'A band id from /api/v1/bands, e.g. W_VI.' },
		{ name: 'population', in: 'query', schema: enumParam(POPULATION_IDS) },
		{ name: 'anchor', in: 'query', description: 'The anchor type.', schema: enumParam(ANCHOR_TYPES) },
		{ name: 'state', in: 'query', schema: enumParam(RELATION_STATES) },
		{ name: 'q', in: 'query', description: 'Words in the slug, title or description (case-insensitive).' },
		{ name: 'sort', in: 'query', description: 'Default `title`.', schema: enumParam(CATALOGUE_SORTS) },
		{ name: 'cursor', in: 'query', description: 'The `next_cursor` of the previous page.' },
		{
			name: 'limit',
			in: 'query',
			description: '1 to 200, default 50.',
			schema: { type: 'integer', minimum: 1, maximum: 200 }
		}
	],
	responses: { '422': BAD_QUERY }
});

describeOperation('GET /api/v1/relations/{slug}', { responses: { '404': NOT_VISIBLE } });

for (const operation of ['GET /api/v1/relations/{slug}/versions/{n}', 'GET /api/v1/pins/{ref}']) {
	describeOperation(operation, {
		description:
			'The frozen bytes: ETag is the digest, Content-Digest (RFC 9530) the sha-256 of the body; the same bytes on every fetch.',
		parameters: [IF_NONE_MATCH],
		responses: { '304': NOT_MODIFIED, '404': NOT_VISIBLE }
	});
}

describeOperation('GET /api/v1/relations/{slug}/latest', {
	description:
		'The current version’s pinned bytes, kept by caches for 60 s; Content-Location and Link rel="canonical" name the pin to keep.',
	parameters: [IF_NONE_MATCH],
	responses: {
		'304': NOT_MODIFIED,
		'404': { ...NOT_VISIBLE, description: 'No such relation, or none of its versions is current' }
	}
});

describeOperation('GET /api/v1/relations/{slug}/diff', {
	parameters: [
		{
			name: 'from',
			in: 'query',
			required: true,
			description: 'A version number.',
			schema: { type: 'integer', minimum: 1 }
		},
		{
			name: 'to',
			in: 'query',
			required: true,
			description: 'A version number.',
			schema: { type: 'integer', minimum: 1 }
		}
	],
	responses: {
		'404': NOT_VISIBLE,
		'422': { ...BAD_QUERY, description: 'from or to is not a version the caller may see' }
	}
});

describeOperation('GET /api/v1/digests/{digest}', {
	responses: { '404': NOT_VISIBLE, '422': { ...BAD_QUERY, description: 'Not a digest of the form sha256:<64 hex>' } }
});

describeOperation('GET /api/v1/stars', {
	parameters: [
		{ name: 'q', in: 'query', required: true, description: 'A star’s name or cross id.' },
		{ name: 'cursor', in: 'query', description: 'The `next_cursor` of the previous page.' },
		{
			name: 'limit',
			in: 'query',
			description: '1 to 200, default 50.',
			schema: { type: 'integer', minimum: 1, maximum: 200 }
		}
	],
	responses: { '422': BAD_QUERY }
});

describeOperation('POST /api/v1/relations/{slug}/versions/{n}/reproduce', {
	responses: {
		'401': {
			description:
				'Not signed in, and the version’s bootstrap (200 resamples or more) or calibrator list (5000 or more) is beyond what an anonymous caller may have recomputed',
			schema: 'Problem',
			mediaTypes: ['application/problem+json']
		},
		'404': NOT_VISIBLE,
		'409': {
			description: 'The frozen calibrator revision is missing',
			schema: 'Problem',
			mediaTypes: ['application/problem+json']
		},
		'422': {
			description: 'The engine refused the frozen spec',
			schema: 'Problem',
			mediaTypes: ['application/problem+json']
		}
	}
});

describeOperation('GET /api/v1/relations/{slug}/versions/{n}/citation', {
	description:
		'A citation naming slug, version, digest, URL, approvers (with ORCID iDs where known) and the calibrator set’s required citations.',
	parameters: [{ name: 'style', in: 'query', description: 'Default `text`.', schema: enumParam(CITATION_STYLES) }],
	responses: {
		'200': {
			description: 'text/plain, BibTeX, CSL-JSON (a list of one dataset item) or DataCite Metadata Schema 4 attributes',
			schema: 'CitationJson',
			mediaTypes: CITATION_STYLES.map((style) => CITATION_MEDIA_TYPES[style])
		},
		'404': NOT_VISIBLE,
		'422': BAD_QUERY
	}
});
