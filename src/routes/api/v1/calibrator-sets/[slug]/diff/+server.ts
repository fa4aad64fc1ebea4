import { json } from '@sveltejs/kit';
import { diffRevisions } from '$lib/server/registry/calibrator-sets';
import { RegistryError } from '$lib/server/registry/errors';
import { findVisibleCalibratorSet } from '$lib/server/registry/calibrator-set-reads';
import { readerOf, registryResponse } from '$lib/server/registry/http';
import { revisionDiffToWire } from '$lib/server/registry/wire';
import type { RequestHandler } from './$types';

const revisionNumber = (raw: string | null, name: string) => {
	if (!raw || !/^[1-9]\d{0,8}$/.test(raw))
		throw new RegistryError(400, 'bad-query', `Give ?${name}= as a revision number.`);
	return Number(raw);
};

/** Row-by-row, field-by-field diff of two revisions (`?from=1&to=2`), keyed by cross_id when present. */
export const GET: RequestHandler = (event) =>
	registryResponse(async () => {
		const from = revisionNumber(event.url.searchParams.get('from'), 'from');
		const to = revisionNumber(event.url.searchParams.get('to'), 'to');
		// A set private to its group is not diffed for those who may not see it.
		await findVisibleCalibratorSet(event.locals.em, readerOf(event.locals), event.params.slug);
		const diff = await diffRevisions(event.locals.em, event.params.slug, from, to);
		return json({ calibrator_set: event.params.slug, from, to, ...revisionDiffToWire(diff) });
	});
