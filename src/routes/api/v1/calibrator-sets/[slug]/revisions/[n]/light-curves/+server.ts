import { json } from '@sveltejs/kit';
import { readerOf, registryResponse, versionParam } from '$lib/server/registry/http';
import { revisionLightCurves } from '$lib/server/registry/light-curve-values';
import type { RequestHandler } from './$types';

/** The light-curve analyses behind a revision's value_sources; they never change, like the revision. */
export const GET: RequestHandler = ({ locals, params }) =>
	registryResponse(async () => {
		const { isPublic, ...body } = await revisionLightCurves(
			locals.em,
			readerOf(locals),
			params.slug,
			versionParam(params.n)
		);
		return json(body, {
			headers: isPublic
				? { 'cache-control': 'public, max-age=31536000, immutable' }
				: { 'cache-control': 'private, no-cache', vary: 'Authorization, Cookie' }
		});
	});
