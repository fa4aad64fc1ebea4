import { anyone, type AccessRule } from '../access-rule';

/**
 * The public read API: relations, versions, digests, calibrator sets, stars, distances, citations, feeds, export.
 * Everything is open to anyone; private relations and embargoed versions are filtered by the services
 * (404 to whoever may not see them), and a token shows them only with read:private.
 */
export const READ_API_RULES: readonly AccessRule[] = [
	{
		route: '/api/v1/relations',
		method: 'GET',
		audience: anyone,
		tokenScope: 'any',
		summary: 'the relation catalogue (filter, search, sort, keyset pages)'
	},
	{
		route: '/api/v1/relations/[slug]',
		method: 'GET',
		audience: anyone,
		tokenScope: 'any',
		summary: 'a relation with its versions and their standing'
	},
	{
		route: '/api/v1/relations/[slug]/latest',
		method: 'GET',
		audience: anyone,
		tokenScope: 'any',
		summary: 'the current version’s pinned body'
	},
	{
		route: '/api/v1/relations/[slug]/diff',
		method: 'GET',
		audience: anyone,
		tokenScope: 'any',
		summary: 'compare two versions of a relation'
	},
	{
		route: '/api/v1/relations/[slug]/versions/[n]/reproduce',
		method: 'POST',
		audience: anyone,
		tokenScope: 'any',
		summary: 'rerun a version’s frozen fit and recompute its digest'
	},
	{
		route: '/api/v1/relations/[slug]/versions/[n]/citation',
		method: 'GET',
		audience: anyone,
		tokenScope: 'any',
		summary: 'cite a version (text, BibTeX, CSL-JSON, DataCite)'
	},
	{
		route: '/api/v1/digests/[digest]',
		method: 'GET',
		audience: anyone,
		tokenScope: 'any',
		summary: 'what a sha256 digest names'
	},
	{
		route: '/api/v1/stars',
		method: 'GET',
		audience: anyone,
		tokenScope: 'any',
		summary: 'where a star appears: calibrator revisions and relation versions'
	},
	{
		route: '/relations/[slug]/feed.atom',
		method: 'GET',
		audience: anyone,
		summary: 'Atom feed of a relation’s new and deprecated versions'
	}
];
