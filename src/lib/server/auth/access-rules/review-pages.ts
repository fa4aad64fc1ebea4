import { admin, reviewer, signedIn, type AccessRule } from '../access-rule';

/**
 * The review desk and the administration settings. Pages under `/relations/[slug]` name a relation,
 * not a group, so group standing is decided by the registry services there, not by the guard.
 */
export const REVIEW_PAGE_RULES: readonly AccessRule[] = [
	{ route: '/review', method: 'GET', audience: signedIn, summary: 'the review queue' },
	{ route: '/review/[id]', method: 'GET', audience: signedIn, summary: 'a proposal with its comparison' },
	{ route: '/review/[id]', method: 'POST', action: 'comment', audience: signedIn, summary: 'comment on a proposal' },
	{ route: '/review/[id]', method: 'POST', action: 'approve', audience: reviewer, summary: 'approve a proposal' },
	{
		route: '/review/[id]',
		method: 'POST',
		action: 'requestChanges',
		audience: reviewer,
		summary: 'ask the author for changes'
	},
	{ route: '/review/[id]', method: 'POST', action: 'reject', audience: reviewer, summary: 'reject a proposal' },
	{
		route: '/review/[id]',
		method: 'POST',
		action: 'submit',
		audience: signedIn,
		summary: 'submit for review (author)'
	},
	{
		route: '/review/[id]',
		method: 'POST',
		action: 'withdraw',
		audience: signedIn,
		summary: 'withdraw a proposal (author)'
	},
	{
		route: '/review/[id]',
		method: 'POST',
		action: 'rebase',
		audience: signedIn,
		summary: 'compare a stale proposal with the current version (author)'
	},
	{
		route: '/relations/[slug]/versions/[n]/lifecycle',
		method: 'GET',
		audience: signedIn,
		summary: 'lifecycle of a version'
	},
	{
		route: '/relations/[slug]/versions/[n]/lifecycle',
		method: 'POST',
		action: 'deprecate',
		audience: signedIn,
		summary: 'deprecate a version (reviewers and admins)'
	},
	{
		route: '/relations/[slug]/versions/[n]/lifecycle',
		method: 'POST',
		action: 'release',
		audience: signedIn,
		summary: 'release an embargoed version (managers of the owning group and admins)'
	},
	{ route: '/admin/settings', method: 'GET', audience: admin, summary: 'instance settings' },
	{ route: '/admin/settings', method: 'POST', action: 'save', audience: admin, summary: 'change a setting' }
];
