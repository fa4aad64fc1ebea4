import { error } from '@sveltejs/kit';
import { diffRevisions, listRevisions } from '$lib/server/registry/calibrator-sets';
import { orPageError } from '$lib/server/calibrator-pages/page-errors';
import { findVisibleCalibratorSet } from '$lib/server/registry/calibrator-set-reads';
import { readerOf } from '$lib/server/registry/http';
import { lightCurveValueCounts } from '$lib/server/registry/light-curve-values';
import { revisionDiffToWire } from '$lib/server/registry/wire';
import type { PageServerLoad } from './$types';

const revisionNumber = (raw: string | null) => (raw && /^[1-9]\d{0,8}$/.test(raw) ? Number(raw) : null);

export const load: PageServerLoad = async ({ locals, params, url }) =>
	orPageError(async () => {
		// A set private to its group is a 404 to everyone else, like its API reads.
		await findVisibleCalibratorSet(locals.em, readerOf(locals), params.slug);
		const { set, revisions } = await listRevisions(locals.em, params.slug);
		const numbers = revisions.map((revision) => revision.number);
		const latest = numbers.at(-1) ?? null;
		const from = revisionNumber(url.searchParams.get('from')) ?? (numbers.length > 1 ? numbers.at(-2)! : null);
		const to = revisionNumber(url.searchParams.get('to')) ?? latest;
		const fromLightCurves = await lightCurveValueCounts(locals.em, set.id);
		let diff = null;
		if (url.searchParams.has('from') || url.searchParams.has('to')) {
			if (from === null || to === null || !numbers.includes(from) || !numbers.includes(to))
				error(404, 'Choose two revisions this set has.');
		}
		if (from !== null && to !== null && from !== to) {
			diff = { from, to, ...revisionDiffToWire(await diffRevisions(locals.em, set.slug, from, to)) };
		}
		return {
			set: {
				slug: set.slug,
				title: set.title,
				description: set.description,
				group: set.group.slug,
				licence: set.licence,
				citations: [...set.citations]
			},
			revisions: revisions
				.map((revision) => ({
					number: revision.number,
					digest: revision.digest,
					rows: revision.rowCount,
					sourceName: revision.sourceName,
					sourceBytes: revision.sourceBytes,
					note: revision.note,
					createdAt: revision.createdAt.toISOString(),
					fromLightCurves: fromLightCurves.get(revision.number) ?? null
				}))
				.reverse(),
			choice: { from, to },
			diff,
			uploaded: revisionNumber(url.searchParams.get('uploaded')),
			created: url.searchParams.get('created') === '1',
			canUpload: locals.user?.roles.includes('curator') ?? false
		};
	});
