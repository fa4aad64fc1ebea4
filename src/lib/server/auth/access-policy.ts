import type { GroupStanding, Role, TokenScope } from '../entities/index';

/**
 * Who may do what: one row per route and method (and per form action of a page). The request guard
 * in hooks.server.ts enforces this table for every request; a route that is missing from it is
 * refused, and the authorization matrix test drives every row against the running app.
 */
export type Audience =
	| { kind: 'anyone' }
	| { kind: 'signed-in' }
	| { kind: 'role'; role: Role }
	/** A member or manager of the group named by the route's `slug`, or an admin. */
	| { kind: 'group-member' }
	/** A manager of the group named by the route's `slug`, or an admin. */
	| { kind: 'group-manager' };

export type HttpMethod = 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';

export interface AccessRule {
	/** A SvelteKit route id, e.g. `/groups/[slug]`. */
	route: string;
	/** `*` matches every method (only for catch-all routes). */
	method: HttpMethod | '*';
	/** For POST to a page: the form action (`default` for the unnamed one). */
	action?: string;
	audience: Audience;
	/**
	 * API routes only: the scope an API token needs (`any` = any valid token). Without it, tokens are
	 * refused (403). Pages never read the Authorization header: they are for browser sessions.
	 */
	tokenScope?: TokenScope | 'any';
	summary: string;
}

const anyone = { kind: 'anyone' } as const;
const signedIn = { kind: 'signed-in' } as const;
const admin = { kind: 'role', role: 'admin' } as const;
const curator = { kind: 'role', role: 'curator' } as const;
const reviewer = { kind: 'role', role: 'reviewer' } as const;
const groupMember = { kind: 'group-member' } as const;
const groupManager = { kind: 'group-manager' } as const;

export const ACCESS_POLICY: readonly AccessRule[] = [
	// Public pages and operations endpoints.
	{ route: '/', method: 'GET', audience: anyone, summary: 'overview' },
	{ route: '/healthz', method: 'GET', audience: anyone, summary: 'liveness' },
	{ route: '/readyz', method: 'GET', audience: anyone, summary: 'readiness' },

	// Signing in and out; links from e-mail (the secret in the link is the credential).
	{ route: '/sign-in', method: 'GET', audience: anyone, summary: 'sign-in form' },
	{ route: '/sign-in', method: 'POST', action: 'default', audience: anyone, summary: 'sign in' },
	{ route: '/sign-out', method: 'GET', audience: anyone, summary: 'sign-out confirmation' },
	{ route: '/sign-out', method: 'POST', action: 'default', audience: signedIn, summary: 'sign out' },
	{ route: '/invitation', method: 'GET', audience: anyone, summary: 'accept an invitation' },
	{ route: '/invitation', method: 'POST', action: 'default', audience: anyone, summary: 'choose a first password' },
	{ route: '/reset-password', method: 'GET', audience: anyone, summary: 'request a reset link' },
	{ route: '/reset-password', method: 'POST', action: 'default', audience: anyone, summary: 'send a reset link' },
	{ route: '/reset-password/new', method: 'GET', audience: anyone, summary: 'choose a new password' },
	{
		route: '/reset-password/new',
		method: 'POST',
		action: 'default',
		audience: anyone,
		summary: 'set a new password'
	},
	{ route: '/verify-email', method: 'GET', audience: anyone, summary: 'confirm a new address' },
	{ route: '/verify-email', method: 'POST', action: 'default', audience: anyone, summary: 'apply a new address' },

	// The account of the signed-in person.
	{ route: '/account', method: 'GET', audience: signedIn, summary: 'profile, tokens, sessions' },
	{ route: '/account', method: 'POST', action: 'profile', audience: signedIn, summary: 'edit profile' },
	{ route: '/account', method: 'POST', action: 'email', audience: signedIn, summary: 'change e-mail address' },
	{ route: '/account', method: 'POST', action: 'password', audience: signedIn, summary: 'change password' },
	{ route: '/account', method: 'POST', action: 'createToken', audience: signedIn, summary: 'create an API token' },
	{ route: '/account', method: 'POST', action: 'revokeToken', audience: signedIn, summary: 'revoke an API token' },
	{ route: '/account', method: 'POST', action: 'endSession', audience: signedIn, summary: 'end one session' },
	{
		route: '/account',
		method: 'POST',
		action: 'signOutEverywhere',
		audience: signedIn,
		summary: 'end every session'
	},

	// Groups: members see the group; managers (and admins) change who belongs.
	{ route: '/groups/[slug]', method: 'GET', audience: groupMember, summary: 'group and members' },
	{ route: '/groups/[slug]', method: 'POST', action: 'addMember', audience: groupManager, summary: 'add a member' },
	{
		route: '/groups/[slug]',
		method: 'POST',
		action: 'removeMember',
		audience: groupManager,
		summary: 'remove a member'
	},
	{
		route: '/groups/[slug]',
		method: 'POST',
		action: 'setStanding',
		audience: groupManager,
		summary: 'make a member a manager or not'
	},

	// Administration.
	{ route: '/admin', method: 'GET', audience: admin, summary: 'administration overview' },
	{ route: '/admin/users', method: 'GET', audience: admin, summary: 'people and invitations' },
	{ route: '/admin/users', method: 'POST', action: 'invite', audience: admin, summary: 'invite a person' },
	{ route: '/admin/users', method: 'POST', action: 'setRoles', audience: admin, summary: 'change roles' },
	{ route: '/admin/users', method: 'POST', action: 'resendInvitation', audience: admin, summary: 'invite again' },
	{ route: '/admin/groups', method: 'GET', audience: admin, summary: 'groups' },
	{ route: '/admin/groups', method: 'POST', action: 'create', audience: admin, summary: 'create a group' },
	{ route: '/admin/mail', method: 'GET', audience: admin, summary: 'mail captured by the local SMTP server' },
	{ route: '/admin/audit', method: 'GET', audience: admin, summary: 'audit events' },

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

/** The row for a request, or undefined when the table does not list it. */
export function findAccessRule(routeId: string, method: string, action: string | undefined): AccessRule | undefined {
	const upper = method === 'HEAD' ? 'GET' : method.toUpperCase();
	return ACCESS_POLICY.find(
		(rule) =>
			rule.route === routeId &&
			(rule.method === '*' || rule.method === upper) &&
			(rule.action === undefined || rule.action === action)
	);
}

export interface Credentials {
	roles: readonly Role[];
	/** `session` for a browser session; otherwise the scopes of the API token used. */
	via: 'session' | { scopes: readonly TokenScope[] };
}

export type AccessDecision = { allow: true } | { allow: false; status: 401 | 403; reason: string };

/**
 * Decides a request against its rule. `standing` is looked up only for group rules and only when the
 * request is authenticated.
 */
export async function decideAccess(
	rule: AccessRule,
	who: Credentials | null,
	standing: () => Promise<GroupStanding | null>
): Promise<AccessDecision> {
	if (rule.audience.kind === 'anyone') return { allow: true };
	if (!who) return { allow: false, status: 401, reason: 'Sign in, or send a valid API token.' };
	if (who.via !== 'session') {
		if (!rule.tokenScope) return { allow: false, status: 403, reason: 'API tokens cannot be used here.' };
		if (rule.tokenScope !== 'any' && !who.via.scopes.includes(rule.tokenScope)) {
			return { allow: false, status: 403, reason: `This needs a token with the ${rule.tokenScope} scope.` };
		}
	}
	const isAdmin = who.roles.includes('admin');
	switch (rule.audience.kind) {
		case 'signed-in':
			return { allow: true };
		case 'role':
			return who.roles.includes(rule.audience.role)
				? { allow: true }
				: { allow: false, status: 403, reason: `This needs the ${rule.audience.role} role.` };
		case 'group-member':
			if (isAdmin || (await standing()) !== null) return { allow: true };
			return { allow: false, status: 403, reason: 'Only members of this group may see this.' };
		case 'group-manager':
			if (isAdmin || (await standing()) === 'manager') return { allow: true };
			return { allow: false, status: 403, reason: 'Only managers of this group may do this.' };
	}
}

/** The form action a POST to a page names (`?/name`), or `default`. */
export function formActionName(url: URL): string {
	for (const key of url.searchParams.keys()) if (key.startsWith('/')) return key.slice(1);
	return 'default';
}
