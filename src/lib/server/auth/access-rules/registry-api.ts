import { anyone, curator, groupManager, groupMember, reviewer, signedIn, type AccessRule } from '../access-rule';

/** The API: accounts, registry writes and the first read routes. */
export const REGISTRY_API_RULES: readonly AccessRule[] = [
	// API.
	{ route: '/api/v1/[...path]', method: '*', audience: anyone, tokenScope: 'any', summary: 'unknown API path' },
	{ route: '/api/v1/me', method: 'GET', audience: signedIn, tokenScope: 'any', summary: 'who am I' },
	{ route: '/api/v1/groups', method: 'GET', audience: anyone, tokenScope: 'any', summary: 'list groups' },
	{
		route: '/api/v1/openapi.json',
		method: 'GET',
		audience: anyone,
		tokenScope: 'any',
		summary: 'the OpenAPI 3.1 document'
	},
	{
		route: '/api/v1/hubble',
		method: 'POST',
		audience: anyone,
		tokenScope: 'any',
		summary: 'H0 from a distance and a velocity or line'
	},
	{ route: '/api/v1/bands', method: 'GET', audience: anyone, tokenScope: 'any', summary: 'the band catalogue' },
	{
		route: '/api/v1/relations/[slug]/versions/[n]',
		method: 'GET',
		audience: anyone,
		tokenScope: 'any',
		summary: 'one frozen version'
	},
	{
		route: '/api/v1/pins/[ref]',
		method: 'GET',
		audience: anyone,
		tokenScope: 'any',
		summary: 'one frozen version by slug@version'
	},
	{
		route: '/api/v1/groups/[slug]/members',
		method: 'GET',
		audience: groupMember,
		tokenScope: 'read:private',
		summary: 'list members of a group'
	},
	{
		route: '/api/v1/groups/[slug]/members',
		method: 'POST',
		audience: groupManager,
		tokenScope: 'write',
		summary: 'add a member to a group'
	},

	// Registry writes. Group ownership, visibility and authorship are checked by the services (a relation's
	// or set's slug is not a group's), after the resource is found: a missing one is 404, never 403.
	{
		route: '/api/v1/calibrator-sets',
		method: 'POST',
		audience: curator,
		tokenScope: 'write',
		summary: 'create a calibrator set'
	},
	{
		route: '/api/v1/calibrator-sets/[slug]/revisions',
		method: 'POST',
		audience: curator,
		tokenScope: 'write',
		summary: 'upload a calibrator revision (CSV or TSV)'
	},
	{
		route: '/api/v1/calibrator-sets/[slug]/diff',
		method: 'GET',
		audience: anyone,
		tokenScope: 'any',
		summary: 'diff two revisions of a calibrator set'
	},
	{ route: '/api/v1/relations', method: 'POST', audience: curator, tokenScope: 'write', summary: 'create a relation' },
	{ route: '/api/v1/fits', method: 'POST', audience: curator, tokenScope: 'write', summary: 'run or queue a fit' },
	{ route: '/api/v1/jobs/[id]', method: 'GET', audience: signedIn, tokenScope: 'any', summary: 'a job and its result' },
	{
		route: '/api/v1/relations/[slug]/proposals',
		method: 'POST',
		audience: curator,
		tokenScope: 'write',
		summary: 'propose a fit as the next version'
	},
	{ route: '/api/v1/proposals', method: 'GET', audience: signedIn, tokenScope: 'any', summary: 'list proposals' },
	{
		route: '/api/v1/proposals/[id]',
		method: 'GET',
		audience: signedIn,
		tokenScope: 'any',
		summary: 'a proposal with its comparison'
	},
	{
		route: '/api/v1/proposals/[id]',
		method: 'PATCH',
		audience: curator,
		tokenScope: 'write',
		summary: 'edit a proposal'
	},
	{
		route: '/api/v1/proposals/[id]/submit',
		method: 'POST',
		audience: curator,
		tokenScope: 'write',
		summary: 'submit a proposal for review'
	},
	{
		route: '/api/v1/proposals/[id]/withdraw',
		method: 'POST',
		audience: curator,
		tokenScope: 'write',
		summary: 'withdraw a proposal'
	},
	{
		route: '/api/v1/proposals/[id]/rebase',
		method: 'POST',
		audience: curator,
		tokenScope: 'write',
		summary: 'rebase a proposal on the current version'
	},
	{
		route: '/api/v1/proposals/[id]/comments',
		method: 'POST',
		audience: signedIn,
		tokenScope: 'write',
		summary: 'comment on a proposal'
	},
	{
		route: '/api/v1/proposals/[id]/reviews',
		method: 'POST',
		audience: reviewer,
		tokenScope: 'review',
		summary: 'approve, request changes or reject'
	},
	{
		route: '/api/v1/relations/[slug]/watch',
		method: 'POST',
		audience: signedIn,
		tokenScope: 'write',
		summary: 'watch a relation (mail on new and deprecated versions)'
	},
	{
		route: '/api/v1/relations/[slug]/watch',
		method: 'DELETE',
		audience: signedIn,
		tokenScope: 'write',
		summary: 'stop watching a relation'
	},
	{
		route: '/api/v1/relations/[slug]/versions/[n]/deprecate',
		method: 'POST',
		audience: signedIn,
		tokenScope: 'review',
		summary: 'deprecate a version (reviewers and admins)'
	},
	{
		route: '/api/v1/relations/[slug]/versions/[n]/release',
		method: 'POST',
		audience: signedIn,
		tokenScope: 'write',
		summary: 'end an embargo early (managers of the owning group, admins)'
	}
];
