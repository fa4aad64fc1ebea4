import { json } from '@sveltejs/kit';
import { VersionDiffQuerySchema } from '$lib/server/api/read-schemas';
import { readerOf, registryResponse } from '$lib/server/registry/http';
import { parseQuery, VIEWER_DEPENDENT_HEADERS } from '$lib/server/registry/read-http';
import { diffVersions } from '$lib/server/registry/version-diff';
import { comparisonToWire } from '$lib/server/registry/wire';
import type { RequestHandler } from './$types';

/** `?from=a&to=b`: coefficients with Δ and Δ/σ, settings, predictions, rationale and calibrators. */
export const GET: RequestHandler = ({ locals, params, url }) =>
	registryResponse(async () => {
		const { from, to } = parseQuery(url, VersionDiffQuerySchema);
		const diff = await diffVersions(locals.em, readerOf(locals), params.slug, from, to);
		return json(
			{ from: diff.from, to: diff.to, ...comparisonToWire(diff.comparison, diff.calibrators) },
			{ headers: VIEWER_DEPENDENT_HEADERS }
		);
	});
