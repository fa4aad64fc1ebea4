/** Request and response schemas of calibrator-set reads and exports, the archive and the distances endpoint, registered for the OpenAPI document. */
import { z } from 'zod';
import { RELATION_VISIBILITIES } from '../entities/relation.entity';
import { RegistryError } from '../registry/errors';
import { registerApiSchema } from './schema-registry';

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
