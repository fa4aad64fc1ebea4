import { admin, anyone, groupManager, groupMember, signedIn, type AccessRule } from '../access-rule';

/** Public pages, accounts, groups and administration. */
export const ACCOUNT_PAGE_RULES: readonly AccessRule[] = [
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
	{ route: '/admin/audit', method: 'GET', audience: admin, summary: 'audit events' }
];
