import { json } from '@sveltejs/kit';
import { readBodyWithLimit } from '$lib/server/api/request-body';
import { getConfig } from '$lib/server/config';
import { LIGHT_CURVE_FILLS, type LightCurveFill } from '$lib/calibration/index';
import { storeRevision, UPLOAD_MEDIA_TYPES } from '$lib/server/registry/calibrator-sets';
import { RegistryError } from '$lib/server/registry/errors';
import { actorOf, registryResponse, UUID } from '$lib/server/registry/http';
import type { LightCurveValuesRequest } from '$lib/server/registry/light-curve-values';
import { ColumnMappingSchema } from '$lib/server/registry/schemas';
import { refuseForbiddenParameters } from '$lib/server/registry/upload-checks';
import { revisionToWire } from '$lib/server/registry/wire';
import { getObjectStorage } from '$lib/server/storage/app-storage';
import type { RequestHandler } from './$types';

/**
 * Uploads a revision as a raw text/csv or text/tab-separated-values body. Query: `mapping` (JSON
 * column mapping for non-canonical headers), `name` (the file's name), `note`, and
 * `non_positive_parallax=keep` to keep zero and negative parallaxes for parallax-space fits, and
 * `light_curves=<upload id>` (with `light_curve_fill=blank|all`) to take periods and mean magnitudes from
 * a finished light-curve upload of the caller's.
 */
export const POST: RequestHandler = (event) =>
	registryResponse(async () => {
		const mediaType = (event.request.headers.get('content-type') ?? '').split(';')[0].trim().toLowerCase();
		if (!(UPLOAD_MEDIA_TYPES as readonly string[]).includes(mediaType)) {
			throw new RegistryError(
				415,
				'unsupported-media-type',
				'Send the table as text/csv or text/tab-separated-values.'
			);
		}
		refuseForbiddenParameters(event.url.searchParams, ['name', 'note', 'mapping']);
		const mapping = parseMapping(event.url.searchParams.get('mapping'));
		const lightCurves = parseLightCurves(event.url.searchParams);
		const config = getConfig();
		const bytes = await readBodyWithLimit(event.request, config.CANDLEBOOK_MAX_UPLOAD_BYTES);
		const name =
			event.url.searchParams.get('name')?.slice(0, 200) || `upload.${mediaType === 'text/csv' ? 'csv' : 'tsv'}`;
		const { revision, valueSources, lightCurveNotices } = await storeRevision(
			event.locals.em,
			getObjectStorage(),
			actorOf(event.locals),
			event.params.slug,
			{
				bytes,
				mediaType,
				fileName: name,
				mapping,
				note: event.url.searchParams.get('note')?.slice(0, 2000) ?? '',
				keepNonPositiveParallax: event.url.searchParams.get('non_positive_parallax') === 'keep',
				lightCurves
			},
			{
				maxBytes: config.CANDLEBOOK_MAX_UPLOAD_BYTES,
				maxRows: config.CANDLEBOOK_MAX_UPLOAD_ROWS,
				maxColumns: 200,
				maxCellLength: 500
			}
		);
		const taken = lightCurves
			? { ...lightCurves, values_taken: valueSources.length, notices: lightCurveNotices }
			: null;
		return json(
			{ ...revisionToWire(event.params.slug, revision), light_curves: taken },
			{
				status: 201,
				headers: { location: `/api/v1/calibrator-sets/${event.params.slug}/revisions/${revision.number}` }
			}
		);
	});

function parseMapping(raw: string | null) {
	if (!raw) return {};
	let value: unknown;
	try {
		value = JSON.parse(raw);
	} catch {
		throw new RegistryError(400, 'bad-mapping', 'The mapping query parameter is not valid JSON.');
	}
	const parsed = ColumnMappingSchema.safeParse(value);
	if (!parsed.success) {
		throw new RegistryError(
			422,
			'bad-mapping',
			'The mapping does not match its schema.',
			parsed.error.issues.map((issue) => ({ path: `mapping/${issue.path.join('/')}`, message: issue.message }))
		);
	}
	return parsed.data;
}

function parseLightCurves(query: URLSearchParams): LightCurveValuesRequest | undefined {
	const upload = query.get('light_curves');
	const fill = query.get('light_curve_fill') ?? 'blank';
	if (upload === null) {
		if (query.has('light_curve_fill')) {
			throw new RegistryError(422, 'validation-failed', 'light_curve_fill needs light_curves.', [
				{ path: 'light_curves', message: 'is required when light_curve_fill is given' }
			]);
		}
		return undefined;
	}
	const errors = [
		...(UUID.test(upload)
			? []
			: [{ path: 'light_curves', message: 'must be the id (a UUID) of a light-curve upload' }]),
		...((LIGHT_CURVE_FILLS as readonly string[]).includes(fill)
			? []
			: [{ path: 'light_curve_fill', message: `must be one of ${LIGHT_CURVE_FILLS.join(', ')}` }])
	];
	if (errors.length > 0)
		throw new RegistryError(422, 'validation-failed', 'The light-curve options are not valid.', errors);
	return { upload: upload.toLowerCase(), fill: fill as LightCurveFill };
}
