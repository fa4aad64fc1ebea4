import { json } from '@sveltejs/kit';
import { UploadQuerySchema } from '$lib/server/api/light-curve-schemas';
import { readBodyWithLimit } from '$lib/server/api/request-body';
import { getConfig } from '$lib/server/config';
import { getAppLightCurveQueue } from '$lib/server/jobs/app-queue';
import { fieldErrorsOf } from '$lib/server/light-curves/http';
import {
	DEFAULT_UPLOAD_LIMITS,
	findUpload,
	listUploads,
	parseColumnMapping,
	uploadLightCurves
} from '$lib/server/light-curves/uploads';
import { uploadToWire } from '$lib/server/light-curves/wire';
import { RegistryError } from '$lib/server/registry/errors';
import { actorOf, registryResponse } from '$lib/server/registry/http';
import { refuseForbiddenParameters } from '$lib/server/registry/upload-checks';
import { getObjectStorage } from '$lib/server/storage/app-storage';
import type { RequestHandler } from './$types';

/**
 * Uploads light curves as a raw text/csv or text/tab-separated-values body. Query: `time_reference`
 * (HJD, BJD_TDB, JD, MJD), `time_offset_days` (e.g. 2450000), `mapping` (JSON, column → field),
 * `star` and `band` for a file of one star, `name`, `population`, `min_period_days`, `max_period_days`.
 * Answers 201 with the upload and its queued analysis job.
 */
export const POST: RequestHandler = (event) =>
	registryResponse(async () => {
		const actor = actorOf(event.locals);
		const query = event.url.searchParams;
		refuseForbiddenParameters(query, ['name', 'star', 'band', 'mapping']);
		const parsed = UploadQuerySchema.safeParse({
			time_reference: query.get('time_reference'),
			time_offset_days: query.get('time_offset_days'),
			star: query.get('star'),
			band: query.get('band'),
			name: query.get('name'),
			population: query.get('population') ?? undefined,
			min_period_days: query.get('min_period_days') ?? undefined,
			max_period_days: query.get('max_period_days') ?? undefined
		});
		if (!parsed.success) {
			throw new RegistryError(
				422,
				'validation-failed',
				'The query parameters are not valid.',
				fieldErrorsOf(parsed.error)
			);
		}
		const mapping = parseColumnMapping(query.get('mapping'));
		const mediaType = event.request.headers.get('content-type') ?? '';
		const maxBytes = Math.min(getConfig().CANDLEBOOK_MAX_UPLOAD_BYTES, DEFAULT_UPLOAD_LIMITS.maxBytes);
		const bytes = await readBodyWithLimit(event.request, maxBytes);
		const upload = await uploadLightCurves(
			event.locals.em,
			getObjectStorage(),
			actor,
			{
				bytes,
				mediaType,
				fileName: parsed.data.name || 'light-curves',
				timeReference: parsed.data.time_reference,
				timeOffsetDays: parsed.data.time_offset_days,
				mapping,
				star: parsed.data.star,
				band: parsed.data.band,
				population: parsed.data.population,
				minPeriodDays: parsed.data.min_period_days,
				maxPeriodDays: parsed.data.max_period_days
			},
			{ enqueueLightCurves: async (jobId) => (await getAppLightCurveQueue()).enqueueLightCurves(jobId) },
			{ ...DEFAULT_UPLOAD_LIMITS, maxBytes }
		);
		const found = await findUpload(event.locals.em, actor, upload.id);
		return json(uploadToWire(found.upload, found.results, found.job), {
			status: 201,
			headers: { location: `/api/v1/light-curves/uploads/${upload.id}` }
		});
	});

/** The caller's uploads, newest first. */
export const GET: RequestHandler = (event) =>
	registryResponse(async () => {
		const uploads = await listUploads(event.locals.em, actorOf(event.locals));
		return json({ uploads }, { headers: { 'cache-control': 'no-store' } });
	});
