import type { MikroORM } from '@mikro-orm/postgresql';
import { expect, test } from '@playwright/test';
import { ACCESS_POLICY, type AccessRule } from '../../src/lib/server/auth/access-policy';
import type { GroupStanding, Role, TokenScope } from '../../src/lib/server/entities/index';
import {
	createBearerToken,
	createGroupRow,
	createPerson,
	createSessionCookie,
	openOrm,
	uniqueSlug
} from './support/accounts';

/**
 * Every row of the access policy × every kind of caller, against the running production build and
 * its PostgreSQL. Expectations are derived from the row's audience and token scope, independently
 * of the server's own decision code.
 */
type Outcome = 'allowed' | 401 | 403;

interface Caller {
	name: string;
	kind: 'anonymous' | 'session' | 'token' | 'bad-cookie' | 'bad-token';
	roles: Role[];
	/** Standing in the group the matrix targets. */
	standing: GroupStanding | null;
	scopes: TokenScope[];
	userId?: string;
	bearer?: string;
}

const origin = `http://127.0.0.1:${process.env.CANDLEBOOK_TEST_PORT ?? 4173}`;
let orm: MikroORM;
let groupSlug: string;
const callers: Caller[] = [];

test.beforeAll(async () => {
	orm = await openOrm();
	groupSlug = await createGroupRow(orm, uniqueSlug('matrix'));
	const otherGroup = await createGroupRow(orm, uniqueSlug('elsewhere'));
	const person = async (
		name: string,
		roles: Role[],
		standing: GroupStanding | null = null,
		elsewhere: GroupStanding | null = null
	): Promise<Caller> => {
		const groups = [
			...(standing ? [{ group: groupSlug, standing }] : []),
			...(elsewhere ? [{ group: otherGroup, standing: elsewhere }] : [])
		];
		const user = await createPerson(orm, { label: name, roles, groups });
		return { name, kind: 'session', roles, standing, scopes: [], userId: user.id };
	};

	callers.push(
		{ name: 'anonymous', kind: 'anonymous', roles: [], standing: null, scopes: [] },
		{ name: 'bad cookie', kind: 'bad-cookie', roles: [], standing: null, scopes: [] },
		{ name: 'bad token', kind: 'bad-token', roles: [], standing: null, scopes: [], bearer: 'cbk_notarealtokenatall' },
		await person('reader', ['reader']),
		await person('curator', ['reader', 'curator']),
		await person('reviewer', ['reader', 'reviewer']),
		await person('admin', ['reader', 'admin']),
		await person('group member', ['reader'], 'member'),
		await person('non-member (manager elsewhere)', ['reader'], null, 'manager'),
		await person('group manager', ['reader'], 'manager')
	);

	// Tokens belong to someone who, in a browser, could do everything but administration: only the
	// token's scopes limit what it may do.
	const holder = await createPerson(orm, {
		label: 'token holder',
		roles: ['reader', 'curator', 'reviewer'],
		groups: [{ group: groupSlug, standing: 'manager' }]
	});
	const tokenCaller = async (
		scopes: TokenScope[],
		state: 'active' | 'revoked' | 'expired' = 'active'
	): Promise<Caller> => ({
		name: `${state === 'active' ? 'token' : `${state} token`} [${scopes.join(', ') || 'no scope'}]`,
		kind: state === 'active' ? 'token' : 'bad-token',
		roles: holder.roles,
		standing: 'manager',
		scopes,
		bearer: await createBearerToken(orm, holder.id, scopes, state)
	});
	callers.push(
		await tokenCaller([]),
		await tokenCaller(['read:private']),
		await tokenCaller(['write']),
		await tokenCaller(['review']),
		await tokenCaller(['read:private', 'write', 'review']),
		await tokenCaller(['read:private', 'write', 'review'], 'revoked'),
		await tokenCaller(['read:private', 'write', 'review'], 'expired')
	);
});

test.afterAll(async () => {
	await orm?.close(true);
});

const isApi = (rule: AccessRule) => rule.route.startsWith('/api/');

function expectedOutcome(rule: AccessRule, caller: Caller): Outcome {
	const api = isApi(rule);
	if (api && caller.kind === 'bad-token') return 401;
	// Pages never read bearer tokens, and a bad cookie is no credential at all.
	const anonymous =
		caller.kind === 'anonymous' ||
		caller.kind === 'bad-cookie' ||
		(!api && (caller.kind === 'token' || caller.kind === 'bad-token'));
	if (rule.audience.kind === 'anyone') return 'allowed';
	if (anonymous) return 401;
	if (caller.kind === 'token') {
		if (!rule.tokenScope) return 403;
		if (rule.tokenScope !== 'any' && !caller.scopes.includes(rule.tokenScope)) return 403;
	}
	const admin = caller.roles.includes('admin');
	switch (rule.audience.kind) {
		case 'signed-in':
			return 'allowed';
		case 'role':
			return caller.roles.includes(rule.audience.role) ? 'allowed' : 403;
		case 'group-member':
			return admin || caller.standing !== null ? 'allowed' : 403;
		case 'group-manager':
			return admin || caller.standing === 'manager' ? 'allowed' : 403;
	}
}

function pathFor(rule: AccessRule): string {
	return rule.route.replace('[slug]', groupSlug).replace('[...path]', 'no-such-resource');
}

function classify(response: Response, rule: AccessRule, method: string): Outcome | `unexpected ${number}` {
	if (response.status === 401 || response.status === 403) return response.status;
	const location = response.headers.get('location') ?? '';
	// A page that needs a signed-in visitor sends them to the sign-in form, with the way back.
	if (!isApi(rule) && method === 'GET' && response.status === 303 && location.startsWith('/sign-in?next=')) return 401;
	if (response.status >= 500) return `unexpected ${response.status}`;
	return 'allowed';
}

async function attempt(rule: AccessRule, caller: Caller): Promise<Outcome | `unexpected ${number}`> {
	const method = rule.method === '*' ? 'GET' : rule.method;
	const headers: Record<string, string> = {};
	if (caller.kind === 'session')
		headers.cookie = `candlebook_session=${await createSessionCookie(orm, caller.userId!)}`;
	if (caller.kind === 'bad-cookie') headers.cookie = 'candlebook_session=not-a-session';
	if (caller.bearer) headers.authorization = `Bearer ${caller.bearer}`;
	let url = `${origin}${pathFor(rule)}`;
	let body: string | undefined;
	if (method !== 'GET') {
		if (isApi(rule)) {
			headers['content-type'] = 'application/json';
			body = '{}';
		} else {
			// A form post from the app's own pages: same origin, an empty form (invalid, so harmless).
			headers['content-type'] = 'application/x-www-form-urlencoded';
			headers.origin = origin;
			body = '';
			if (rule.action && rule.action !== 'default') url += `?/${rule.action}`;
		}
	}
	const response = await fetch(url, { method, headers, body, redirect: 'manual' });
	await response.arrayBuffer();
	return classify(response, rule, method);
}

test('every route × every caller gets exactly the access the policy grants', async () => {
	test.setTimeout(120_000);
	const mismatches: string[] = [];
	let checks = 0;
	const outcomes = new Set<string>();
	for (const rule of ACCESS_POLICY) {
		const results = await Promise.all(callers.map(async (caller) => [caller, await attempt(rule, caller)] as const));
		for (const [caller, actual] of results) {
			checks++;
			const expected = expectedOutcome(rule, caller);
			outcomes.add(String(expected));
			if (actual !== expected) {
				const label = `${rule.method} ${rule.route}${rule.action ? ` ?/${rule.action}` : ''}`;
				mismatches.push(`${label} as ${caller.name}: expected ${expected}, got ${actual}`);
			}
		}
	}
	expect(mismatches).toEqual([]);
	expect(checks).toBe(ACCESS_POLICY.length * callers.length);
	// The matrix exercises allowing and both kinds of refusal.
	expect([...outcomes].sort()).toEqual(['401', '403', 'allowed']);
});

test('refusals carry problem+json on the API and a challenge on 401', async () => {
	const anonymous = await fetch(`${origin}/api/v1/me`);
	expect(anonymous.status).toBe(401);
	expect(anonymous.headers.get('www-authenticate')).toBe('Bearer');
	expect(await anonymous.json()).toMatchObject({ status: 401, type: '/docs/problems#unauthenticated' });

	const bad = await fetch(`${origin}/api/v1/groups`, { headers: { authorization: 'Bearer cbk_unknown' } });
	expect(bad.status).toBe(401);
	expect(bad.headers.get('www-authenticate')).toContain('invalid_token');
});

test('a token with the write scope adds a member over the API; a member sees the change', async () => {
	const manager = callers.find((caller) => caller.name === 'token [write]')!;
	const newcomer = await createPerson(orm, { label: 'api newcomer', roles: ['reader'] });
	const added = await fetch(`${origin}/api/v1/groups/${groupSlug}/members`, {
		method: 'POST',
		headers: { authorization: `Bearer ${manager.bearer}`, 'content-type': 'application/json' },
		body: JSON.stringify({ email: newcomer.email })
	});
	expect(added.status).toBe(201);
	expect(await added.json()).toMatchObject({ email: newcomer.email, standing: 'member' });

	const reader = callers.find((caller) => caller.name === 'token [read:private]')!;
	const listed = await fetch(`${origin}/api/v1/groups/${groupSlug}/members`, {
		headers: { authorization: `Bearer ${reader.bearer}` }
	});
	const members = (await listed.json()).members as { email: string }[];
	expect(members.map((member) => member.email)).toContain(newcomer.email);
});

test('a cross-site form post with a valid session is refused by the origin check', async () => {
	const admin = callers.find((caller) => caller.name === 'admin')!;
	const response = await fetch(`${origin}/admin/groups?/create`, {
		method: 'POST',
		headers: {
			cookie: `candlebook_session=${await createSessionCookie(orm, admin.userId!)}`,
			'content-type': 'application/x-www-form-urlencoded',
			origin: 'http://elsewhere.invalid'
		},
		body: 'slug=crosssite&name=Cross',
		redirect: 'manual'
	});
	expect(response.status).toBe(403);
});
