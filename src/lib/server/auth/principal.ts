import type { Role, TokenScope } from '../entities/index';

/** The signed-in person as the request pipeline sees them (never the entity). */
export interface AuthUser {
	id: string;
	email: string;
	displayName: string;
	roles: Role[];
}

/**
 * The API token a request came with. Its scopes authorise the route (access-policy.ts) and decide what
 * the caller reads: without read:private the registry sees the caller as it sees an anonymous one
 * (`readsPrivate` on the Actor, registry/http.ts; `maySeePrivateOf`, registry/actor.ts).
 */
export interface TokenCredential {
	id: string;
	scopes: TokenScope[];
}
