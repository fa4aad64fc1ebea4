import type { GroupStanding, Role, TokenScope } from '../entities/index';
import type { AccessRule } from './access-rule';
import { ACCOUNT_PAGE_RULES } from './access-rules/account-pages';
import { REGISTRY_API_RULES } from './access-rules/registry-api';
import { READ_API_RULES } from './access-rules/read-api';
import { EXPORT_API_RULES } from './access-rules/export-api';
import { LIGHT_CURVE_API_RULES } from './access-rules/light-curves-api';
import { CATALOGUE_PAGE_RULES } from './access-rules/catalogue-pages';
import { CALIBRATOR_PAGE_RULES } from './access-rules/calibrator-pages';
import { REVIEW_PAGE_RULES } from './access-rules/review-pages';
import { WORKSHEET_PAGE_RULES } from './access-rules/worksheet-pages';

export type { AccessRule, Audience, HttpMethod } from './access-rule';

/**
 * Who may do what: one row per route and method (and per form action of a page). The request guard
 * in hooks.server.ts enforces this table for every request; a route that is missing from it is
 * refused, and the authorization matrix test drives every row against the running app. The rows live
 * in access-rules/, one file per area of the product.
 */
export const ACCESS_POLICY: readonly AccessRule[] = [
	...ACCOUNT_PAGE_RULES,
	...REGISTRY_API_RULES,
	...READ_API_RULES,
	...EXPORT_API_RULES,
	...LIGHT_CURVE_API_RULES,
	...CATALOGUE_PAGE_RULES,
	...CALIBRATOR_PAGE_RULES,
	...REVIEW_PAGE_RULES,
	...WORKSHEET_PAGE_RULES
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
