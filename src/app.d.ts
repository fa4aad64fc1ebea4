import type { EntityManager } from '@mikro-orm/postgresql';
import type { Session } from 'lucia';
import type { FieldError } from '$lib/server/api/problem';
import type { AuthUser, TokenCredential } from '$lib/server/auth/principal';

declare global {
	namespace App {
		interface Error {
			message: string;
			/** Field-level problems, rendered as the `errors` list of a problem+json response. */
			errors?: FieldError[];
			/** Correlates a 500 with the server log line. */
			errorId?: string;
		}
		interface Locals {
			/** A request-scoped fork of the ORM's EntityManager. */
			em: EntityManager;
			requestId: string;
			/** The signed-in person (browser session or API token), or null. */
			user: AuthUser | null;
			/** The browser session, when the request came with a valid session cookie. */
			session: Session | null;
			/** The API token, when the request came with a valid `Authorization: Bearer` header. */
			apiToken: TokenCredential | null;
			/** True when the request carried an Authorization header that is not a valid token. */
			badBearer: boolean;
		}
	}
}

export {};
