import type { EntityManager } from '@mikro-orm/postgresql';
import type { FieldError } from '$lib/server/api/problem';

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
		}
	}
}

export {};
