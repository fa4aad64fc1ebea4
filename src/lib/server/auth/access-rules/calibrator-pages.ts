import { anyone, curator, type AccessRule } from '../access-rule';

/** Calibrator set pages, the upload wizard, and refit and propose. */
export const CALIBRATOR_PAGE_RULES: readonly AccessRule[] = [
	{ route: '/calibrator-sets', method: 'GET', audience: anyone, summary: 'calibrator sets' },
	{ route: '/calibrator-sets/new', method: 'GET', audience: curator, summary: 'new calibrator set form' },
	{
		route: '/calibrator-sets/new',
		method: 'POST',
		action: 'default',
		audience: curator,
		summary: 'create a calibrator set'
	},
	{
		route: '/calibrator-sets/[slug]',
		method: 'GET',
		audience: anyone,
		summary: 'revisions, licence, citations, revision diff'
	},
	{ route: '/calibrator-sets/[slug]/upload', method: 'GET', audience: curator, summary: 'upload wizard' },
	{
		route: '/calibrator-sets/[slug]/upload',
		method: 'POST',
		action: 'inspect',
		audience: curator,
		summary: 'stage a file and read its columns'
	},
	{
		route: '/calibrator-sets/[slug]/upload',
		method: 'POST',
		action: 'validate',
		audience: curator,
		summary: 'check a staged file with a column mapping'
	},
	{
		route: '/calibrator-sets/[slug]/upload',
		method: 'POST',
		action: 'commit',
		audience: curator,
		summary: 'store the staged file as the next revision'
	},
	{ route: '/relations/new', method: 'GET', audience: curator, summary: 'new relation form' },
	{ route: '/relations/new', method: 'POST', action: 'default', audience: curator, summary: 'create a relation' },
	{ route: '/relations/[slug]/refit', method: 'GET', audience: curator, summary: 'refit and propose' },
	{ route: '/relations/[slug]/refit', method: 'POST', action: 'fit', audience: curator, summary: 'run a fit' },
	{
		route: '/relations/[slug]/refit',
		method: 'POST',
		action: 'preview',
		audience: curator,
		summary: 'render the rationale'
	},
	{
		route: '/relations/[slug]/refit',
		method: 'POST',
		action: 'save',
		audience: curator,
		summary: 'save the fit as a draft proposal, or revise one'
	},
	{
		route: '/relations/[slug]/refit',
		method: 'POST',
		action: 'submit',
		audience: curator,
		summary: 'submit the proposal for review'
	}
];
