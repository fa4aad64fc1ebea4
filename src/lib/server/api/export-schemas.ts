/** Request and response schemas of calibrator-set reads and exports, the archive and the distances endpoint, registered for the OpenAPI document. */
import { z } from 'zod';
import { RELATION_VISIBILITIES } from '../entities/relation.entity';
import { RegistryError } from '../registry/errors';
import { describeOperation, registerApiSchema } from './schema-registry';

export const CALIBRATOR_SETS_OPERATION = 'GET /api/v1/calibrator-sets';
export const CALIBRATOR_SET_OPERATION = 'GET /api/v1/calibrator-sets/{slug}';
export const REVISION_OPERATION = 'GET /api/v1/calibrator-sets/{slug}/revisions/{n}';
export const ARCHIVE_OPERATION = 'GET /api/v1/export';

const SLUG = /^[a-z0-9]+(?:-[a-z0-9]+)*$/;
const digest = z.string().regex(/^sha256:[0-9a-f]{64}$/);
const timestamp = z.iso.datetime({ offset: true });

/** `?q=&cursor=&limit=` of the set list; the cursor is opaque to clients (base64url of a slug). */
export const CalibratorSetListQuerySchema = z.strictObject({
	q: z.string().trim().max(200).optional(),
	cursor: z.string().max(200).optional(),
	limit: z.coerce.number().int().min(1).max(200).default(50)
});

export const encodeCursor = (slug: string) => Buffer.from(slug, 'utf8').toString('base64url');

export function decodeCursor(cursor: string | undefined): string | null {
	if (!cursor) return null;
	const slug = Buffer.from(cursor, 'base64url').toString('utf8');
	if (!SLUG.test(slug) || encodeCursor(slug) !== cursor)
		throw new RegistryError(400, 'bad-query', 'The cursor is not one this API gave out.', [
			{ path: 'cursor', message: 'unknown cursor' }
		]);
	return slug;
}

export function parseListQuery(params: URLSearchParams) {
	const parsed = CalibratorSetListQuerySchema.safeParse(Object.fromEntries(params));
	if (!parsed.success) {
		throw new RegistryError(
			400,
			'bad-query',
			'The query parameters do not match their schema.',
			parsed.error.issues.map((issue) => ({ path: issue.path.join('/') || '(query)', message: issue.message }))
		);
	}
	return { q: parsed.data.q || null, after: decodeCursor(parsed.data.cursor), limit: parsed.data.limit };
}

export const CalibratorSetSummarySchema = registerApiSchema(
	z.object({
		slug: z.string(),
		title: z.string(),
		description: z.string(),
		group: z.string().nullable(),
		visibility: z.enum(RELATION_VISIBILITIES),
		licence: z.string().describe('SPDX licence id or expression of the data'),
		citations: z.array(z.string()).describe('Citations users of the data must give'),
		created_at: timestamp.nullable(),
		revision_count: z.number().int().min(0),
		latest: z.object({ revision: z.number().int().positive(), digest }).nullable()
	}),
	{ id: 'CalibratorSetSummary', description: 'A calibrator set with its revision count and latest revision.' }
);

export const CalibratorSetPageSchema = registerApiSchema(
	z.object({
		items: z.array(CalibratorSetSummarySchema),
		next_cursor: z.string().nullable().describe('Pass as ?cursor= for the next page; null on the last page')
	}),
	{
		id: 'CalibratorSetPage',
		description: 'One page of the calibrator sets the caller may see, by slug.',
		responseFor: [CALIBRATOR_SETS_OPERATION]
	}
);

const exportLinks = z.object({ json: z.string(), csv: z.string(), votable: z.string() });

export const CalibratorRevisionEntrySchema = registerApiSchema(
	z.object({
		calibrator_set: z.string(),
		revision: z.number().int().positive(),
		digest,
		source_sha256: z.string().regex(/^[0-9a-f]{64}$/),
		source_file: z.object({ name: z.string(), media_type: z.string(), bytes: z.number().int().min(0) }),
		rows: z.number().int().min(0).describe('Number of star rows'),
		note: z.string(),
		created_at: timestamp.nullable(),
		created_by: z.object({ id: z.string(), display_name: z.string().nullable() }),
		exports: exportLinks
	}),
	{ id: 'CalibratorRevisionEntry', description: 'One revision of a calibrator set, without its rows.' }
);

export const CalibratorSetDetailSchema = registerApiSchema(
	CalibratorSetSummarySchema.extend({ revisions: z.array(CalibratorRevisionEntrySchema) }),
	{
		id: 'CalibratorSetDetail',
		description: 'A calibrator set with every revision, oldest first.',
		responseFor: [CALIBRATOR_SET_OPERATION]
	}
);

const cell = z.union([z.number(), z.string(), z.null()]);

export const CalibratorRevisionExportSchema = registerApiSchema(
	z.object({
		calibrator_set: z.string(),
		revision: z.number().int().positive(),
		digest,
		title: z.string(),
		licence: z.string(),
		citations: z.array(z.string()),
		content: z
			.object({
				calibrator_set: z.string(),
				revision: z.number().int().positive(),
				source_file: z.object({ name: z.string(), media_type: z.string(), digest }),
				columns: z.array(z.object({ field: z.string(), source_column: z.string(), unit: z.string().nullable() })),
				rows: z.array(z.object({ star: z.string(), values: z.record(z.string(), cell) })),
				value_sources: z
					.array(
						z.object({
							star: z.string(),
							field: z.string(),
							value: z.number(),
							replaced: cell.describe('What the uploaded table held in that cell'),
							light_curve: z.object({
								result: z.uuid().describe('The analysis (one star in one band)'),
								upload: z.uuid(),
								source_digest: digest.describe('SHA-256 of the raw time-series file'),
								band: z.string().nullable(),
								quantity: z.enum(['period_days', 'period_err_days', 'mean_mag_intensity', 'mean_mag_intensity_err']),
								engine_version: z.string()
							})
						})
					)
					.optional()
					.describe('Present only when values were taken from light-curve analyses: where each came from'),
				digest
			})
			.describe(
				'The sealed revision: remove digest, take the RFC 8785 canonical JSON, SHA-256; "sha256:" + hex equals digest'
			)
	}),
	{
		id: 'CalibratorRevisionExport',
		description: 'One calibrator revision with its rows, licence and required citations (RFC 8785 canonical JSON).',
		responseFor: [REVISION_OPERATION]
	}
);

const notFound = {
	description: 'No such set or revision, or a private set the caller may not see',
	mediaTypes: ['application/problem+json'],
	schema: 'Problem'
};
const badQuery = {
	description: 'A query parameter is malformed',
	mediaTypes: ['application/problem+json'],
	schema: 'Problem'
};

describeOperation(CALIBRATOR_SETS_OPERATION, {
	description:
		"Public sets for everyone; a group's private sets also for its members and admins (tokens need read:private).",
	parameters: [
		{
			name: 'q',
			in: 'query',
			description: 'Text to find in the slug, title or description',
			schema: { type: 'string', maxLength: 200 }
		},
		{ name: 'cursor', in: 'query', description: 'next_cursor of the previous page', schema: { type: 'string' } },
		{
			name: 'limit',
			in: 'query',
			description: 'Sets per page',
			schema: { type: 'integer', minimum: 1, maximum: 200, default: 50 }
		}
	],
	responses: { '400': badQuery }
});

describeOperation(CALIBRATOR_SET_OPERATION, { responses: { '404': notFound } });

describeOperation(REVISION_OPERATION, {
	description:
		'The same bytes on every fetch. ETag is the SHA-256 of the body; Content-Digest (RFC 9530); public sets are cacheable for a year (immutable). Every format names the revision digest (header Candlebook-Revision-Digest, VOTable INFO "digest", JSON "digest"), the licence (Link rel="license", VOTable INFO, JSON) and the citations (VOTable INFO, JSON; Link rel="describedby" points CSV readers to them).',
	parameters: [
		{
			name: 'format',
			in: 'query',
			description: 'Overrides Accept',
			schema: { type: 'string', enum: ['json', 'csv', 'votable'] }
		},
		{
			name: 'Accept',
			in: 'header',
			description: 'application/json, text/csv or application/x-votable+xml',
			schema: { type: 'string' }
		},
		{ name: 'If-None-Match', in: 'header', description: 'An ETag from an earlier fetch', schema: { type: 'string' } }
	],
	responses: {
		'200': {
			description: 'The revision: JSON (schema below), CSV with a header line, or IVOA VOTable 1.4',
			schema: 'CalibratorRevisionExport',
			mediaTypes: ['application/json', 'text/csv', 'application/x-votable+xml']
		},
		'304': { description: 'Not modified (If-None-Match matched the ETag)', mediaTypes: [] },
		'400': badQuery,
		'404': notFound
	}
});

describeOperation(ARCHIVE_OPERATION, {
	description:
		'A zip of every public, unembargoed frozen relation version (the exact pinned bytes) and every revision of every public calibrator set (JSON, CSV, VOTable), with manifest.json (path, kind, ref, SHA-256 of each file) and README.txt (how to verify). Built once per distinct content; the ETag is its content address.',
	responses: {
		'200': { description: 'The archive', mediaTypes: ['application/zip'] },
		'304': { description: 'The archive named in If-None-Match is still the current one', mediaTypes: [] }
	}
});
