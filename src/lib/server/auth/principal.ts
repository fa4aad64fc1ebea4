import type { Role, TokenScope } from '../entities/index';

/** The signed-in person as the request pipeline sees them (never the entity). */
export interface AuthUser {
	id: string;
	email: string;
	displayName: string;
	roles: Role[];
}

export interface TokenCredential {
	id: string;
	scopes: TokenScope[];
}
