import { readdirSync, readFileSync } from 'node:fs';
import { join, relative } from 'node:path';
import { describe, expect, test } from 'vitest';
import { ACCESS_POLICY, decideAccess, findAccessRule, type AccessRule } from '../../src/lib/server/auth/access-policy';

const ROUTES_DIR = join(import.meta.dirname, '..', '..', 'src', 'routes');

interface Endpoint {
	route: string;
	method: string;
	action?: string;
}

function walk(dir: string): string[] {
	return readdirSync(dir, { withFileTypes: true }).flatMap((entry) =>
		entry.isDirectory() ? walk(join(dir, entry.name)) : [join(dir, entry.name)]
	);
}

/** Every endpoint the route files declare: pages (GET and each form action) and +server.ts methods. */
function endpointsOnDisk(): Endpoint[] {
	const endpoints: Endpoint[] = [];
	for (const file of walk(ROUTES_DIR)) {
		const name = file.split('/').pop()!;
		const route = '/' + relative(ROUTES_DIR, join(file, '..')).split('\\').join('/');
		const id = route === '/' ? '/' : route.replace(/\/$/, '');
		const source = readFileSync(file, 'utf8');
		if (name === '+page.svelte') endpoints.push({ route: id, method: 'GET' });
		if (name === '+page.server.ts') {
			const actions = source.split('export const actions')[1];
			if (actions) {
				for (const match of actions.matchAll(/^\t([A-Za-z]\w*): async/gm)) {
					endpoints.push({ route: id, method: 'POST', action: match[1] });
				}
			}
		}
		if (name === '+server.ts') {
			for (const match of source.matchAll(
				/export (?:const|async function|function) (GET|POST|PUT|PATCH|DELETE|fallback)\b/g
			)) {
				endpoints.push({ route: id, method: match[1] === 'fallback' ? 'GET' : match[1] });
			}
		}
	}
	return endpoints;
}

describe('the access policy covers every route', () => {
	const onDisk = endpointsOnDisk();

	test('the route files declare endpoints at all (the scan works)', () => {
		expect(onDisk.length).toBeGreaterThan(20);
		expect(onDisk).toContainEqual({ route: '/account', method: 'POST', action: 'createToken' });
	});

	test.each(
		onDisk.map((endpoint) => [
			`${endpoint.method} ${endpoint.route}${endpoint.action ? ` ?/${endpoint.action}` : ''}`,
			endpoint
		])
	)('%s has a row', (_label, endpoint) => {
		expect(findAccessRule(endpoint.route, endpoint.method, endpoint.action)).toBeDefined();
	});

	test('every row names a route that exists (no stale rows)', () => {
		const stale = ACCESS_POLICY.filter(
			(rule) =>
				!onDisk.some(
					(endpoint) =>
						endpoint.route === rule.route &&
						(rule.method === '*' || endpoint.method === rule.method) &&
						(rule.action === undefined || endpoint.action === rule.action)
				)
		);
		expect(stale).toEqual([]);
	});

	test('rows are unique', () => {
		const keys = ACCESS_POLICY.map((rule) => `${rule.method} ${rule.route} ${rule.action ?? ''}`);
		expect(new Set(keys).size).toBe(keys.length);
	});

	test('tokens are only ever accepted on API routes', () => {
		const offApi = ACCESS_POLICY.filter((rule) => rule.tokenScope && !rule.route.startsWith('/api/'));
		expect(offApi).toEqual([]);
	});
});

describe('access decisions', () => {
	const rule = (overrides: Partial<AccessRule>): AccessRule => ({
		route: '/x',
		method: 'GET',
		audience: { kind: 'signed-in' },
		summary: 'x',
		...overrides
	});
	const none = () => Promise.resolve(null);

	test('anonymous requests get 401, signed-in ones without the role 403', async () => {
		const adminOnly = rule({ audience: { kind: 'role', role: 'admin' } });
		expect(await decideAccess(adminOnly, null, none)).toMatchObject({ allow: false, status: 401 });
		expect(await decideAccess(adminOnly, { roles: ['reader'], via: 'session' }, none)).toMatchObject({
			allow: false,
			status: 403
		});
		expect(await decideAccess(adminOnly, { roles: ['reader', 'admin'], via: 'session' }, none)).toEqual({
			allow: true
		});
	});

	test('a token needs the rule scope even when its owner has the role', async () => {
		const write = rule({ audience: { kind: 'group-manager' }, tokenScope: 'write' });
		const manager = () => Promise.resolve('manager' as const);
		expect(await decideAccess(write, { roles: ['reader'], via: { scopes: ['read:private'] } }, manager)).toMatchObject({
			status: 403
		});
		expect(await decideAccess(write, { roles: ['reader'], via: { scopes: ['write'] } }, manager)).toEqual({
			allow: true
		});
		expect(
			await decideAccess(rule({}), { roles: ['reader', 'admin'], via: { scopes: ['write'] } }, none)
		).toMatchObject({
			status: 403
		});
	});

	test('group rules: members read, managers change, admins do both', async () => {
		const read = rule({ audience: { kind: 'group-member' } });
		const change = rule({ audience: { kind: 'group-manager' } });
		const member = () => Promise.resolve('member' as const);
		const reader = { roles: ['reader'] as const, via: 'session' as const };
		expect(await decideAccess(read, reader, member)).toEqual({ allow: true });
		expect(await decideAccess(read, reader, none)).toMatchObject({ status: 403 });
		expect(await decideAccess(change, reader, member)).toMatchObject({ status: 403 });
		expect(await decideAccess(change, { roles: ['admin'], via: 'session' }, none)).toEqual({ allow: true });
	});
});
