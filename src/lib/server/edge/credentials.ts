import { API_TOKEN_PREFIX } from '../auth/secrets';

const BEARER_TOKEN = new RegExp(`^Bearer +(${API_TOKEN_PREFIX}[a-z0-9]+)$`, 'i');

/**
 * The API token an `Authorization` header carries, or null when the header is absent, empty, names
 * another scheme or holds anything not shaped like a Candlebook token. Only a token-shaped header
 * counts as a credential: the front server does not exempt anything else from the anonymous limit,
 * and the app refuses anything else with 401 without looking it up.
 */
export function bearerToken(header: string | string[] | null | undefined): string | null {
	if (typeof header !== 'string') return null;
	return BEARER_TOKEN.exec(header.trim())?.[1] ?? null;
}
