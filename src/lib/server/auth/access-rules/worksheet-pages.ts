import { anyone, type AccessRule } from '../access-rule';

/** The distance and H0 worksheet and the light-curve pages. */
export const WORKSHEET_PAGE_RULES: readonly AccessRule[] = [
	{
		route: '/api/v1/distances',
		method: 'POST',
		audience: anyone,
		tokenScope: 'any',
		summary: "a pinned relation applied to a host galaxy's Cepheids (private versions: 404 unless visible)"
	},
	{ route: '/worksheet', method: 'GET', audience: anyone, summary: 'the distance and H0 worksheet' },
	{
		route: '/worksheet',
		method: 'POST',
		action: 'distances',
		audience: anyone,
		summary: 'worksheet: host distance from pasted or uploaded Cepheids'
	},
	{
		route: '/worksheet',
		method: 'POST',
		action: 'hubble',
		audience: anyone,
		summary: 'worksheet: H0 from the host distance and a velocity or Hα line'
	},
	{
		route: '/worksheet/export',
		method: 'POST',
		audience: anyone,
		summary: 'worksheet as a JSON or CSV file (form post, for pages without scripts)'
	}
];
