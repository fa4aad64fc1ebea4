import type { Role, TokenScope } from '../entities/index';

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

export const anyone = { kind: 'anyone' } as const;
export const signedIn = { kind: 'signed-in' } as const;
export const admin = { kind: 'role', role: 'admin' } as const;
export const curator = { kind: 'role', role: 'curator' } as const;
export const reviewer = { kind: 'role', role: 'reviewer' } as const;
export const groupMember = { kind: 'group-member' } as const;
export const groupManager = { kind: 'group-manager' } as const;
