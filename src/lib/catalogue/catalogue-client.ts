/**
 * Reads a catalogue page from the relations API in the browser. While the API does not answer for
 * this server (an older build), `null` tells the caller to let the page's own load do it instead.
 */
import type { ProblemLike } from '../components/ProblemNotice.svelte';
import { catalogueSearchParams, type CatalogueFilter, type CataloguePage } from './filters';

export type CatalogueFetch = { ok: true; page: CataloguePage } | { ok: false; problem: ProblemLike } | null;

const NOT_SERVED = new Set([403, 404, 405, 501]);

export async function fetchCataloguePage(
	filter: CatalogueFilter,
	signal: AbortSignal,
	fetcher: typeof fetch = fetch
): Promise<CatalogueFetch> {
	const response = await fetcher(`/api/v1/relations?${catalogueSearchParams(filter)}`, {
		headers: { accept: 'application/json' },
		signal
	});
	const body: unknown = await response.json().catch(() => null);
	if (response.ok && body && Array.isArray((body as CataloguePage).items))
		return { ok: true, page: body as CataloguePage };
	if (NOT_SERVED.has(response.status)) return null;
	const problem = (body ?? {}) as ProblemLike;
	return { ok: false, problem: { ...problem, status: problem.status ?? response.status } };
}
