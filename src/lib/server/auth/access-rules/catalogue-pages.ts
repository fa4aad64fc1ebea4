import { anyone, signedIn, type AccessRule } from '../access-rule';

/** The relation catalogue, relation and version pages, and the API docs page. */
export const CATALOGUE_PAGE_RULES: readonly AccessRule[] = [
	{ route: '/relations', method: 'GET', audience: anyone, summary: 'relation catalogue' },
	{ route: '/relations/[slug]', method: 'GET', audience: anyone, summary: 'a relation and its current version' },
	{ route: '/relations/[slug]', method: 'POST', action: 'watch', audience: signedIn, summary: 'watch a relation' },
	{ route: '/relations/[slug]', method: 'POST', action: 'unwatch', audience: signedIn, summary: 'stop watching' },
	{
		route: '/relations/[slug]',
		method: 'POST',
		action: 'reproduce',
		audience: anyone,
		summary: 'refit a version and compare digests'
	},
	{ route: '/relations/[slug]/versions/[n]', method: 'GET', audience: anyone, summary: 'one frozen version' },
	{
		route: '/relations/[slug]/versions/[n]',
		method: 'POST',
		action: 'reproduce',
		audience: anyone,
		summary: 'refit this version and compare digests'
	},
	{ route: '/docs/api', method: 'GET', audience: anyone, summary: 'API documentation' },
	{ route: '/theme', method: 'POST', audience: anyone, summary: 'choose light, dark or system theme' }
];
