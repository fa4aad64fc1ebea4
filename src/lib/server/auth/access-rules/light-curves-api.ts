import { signedIn, type AccessRule } from '../access-rule';

/**
 * Light-curve uploads and analyses over the API, and their pages. Analysis costs seconds of CPU per
 * star and large batches become jobs that need an owner, so every route needs a signed-in caller (a
 * browser session or any valid token); uploads write, so a token needs the write scope.
 */
export const LIGHT_CURVE_API_RULES: readonly AccessRule[] = [
	{
		route: '/api/v1/light-curves/analyse',
		method: 'POST',
		audience: signedIn,
		tokenScope: 'any',
		summary: 'analyse light curves (≤ 10 series and 20 000 points now, larger as a job)'
	},
	{
		route: '/api/v1/light-curves/uploads',
		method: 'POST',
		audience: signedIn,
		tokenScope: 'write',
		summary: 'upload light curves (CSV or TSV) and queue their analysis'
	},
	{
		route: '/api/v1/light-curves/uploads',
		method: 'GET',
		audience: signedIn,
		tokenScope: 'any',
		summary: 'my light-curve uploads'
	},
	{
		route: '/api/v1/light-curves/uploads/[id]',
		method: 'GET',
		audience: signedIn,
		tokenScope: 'any',
		summary: 'one light-curve upload with its per-star results'
	},

	// Pages: my uploads and the upload form, one upload's batch table, one star's plots.
	{ route: '/light-curves', method: 'GET', audience: signedIn, summary: 'my light-curve uploads and the upload form' },
	{
		route: '/light-curves',
		method: 'POST',
		action: 'default',
		audience: signedIn,
		summary: 'upload a light-curve file'
	},
	{
		route: '/light-curves/[id]',
		method: 'GET',
		audience: signedIn,
		summary: 'one upload: progress and per-star results'
	},
	{
		route: '/light-curves/[id]/[star]',
		method: 'GET',
		audience: signedIn,
		summary: 'one star: periodogram and phased curve'
	}
];
