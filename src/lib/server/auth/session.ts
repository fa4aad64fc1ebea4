import type { Cookies } from '@sveltejs/kit';
import type { Session } from 'lucia';
import type { CandlebookLucia } from './lucia';
import { generateSecret, hashSecret } from './secrets';

/**
 * A browser session. The cookie holds a random token; the session's id in the database is its sha256,
 * so a copy of the session table cannot be replayed as cookies.
 */
export async function startSession(
	lucia: CandlebookLucia,
	userId: string,
	details: { userAgent: string | null; clientAddress: string | null }
): Promise<{ token: string; session: Session }> {
	const token = generateSecret();
	const session = await lucia.createSession(
		userId,
		{ ...details, createdAt: new Date() },
		{ sessionId: hashSecret(token) }
	);
	return { token, session };
}

export function validateSessionToken(lucia: CandlebookLucia, token: string) {
	return lucia.validateSession(hashSecret(token));
}

export function setSessionCookie(cookies: Cookies, lucia: CandlebookLucia, token: string, expiresAt: Date): void {
	const cookie = lucia.createSessionCookie(token);
	cookies.set(cookie.name, cookie.value, { ...cookie.attributes, path: '/', expires: expiresAt });
}

export function clearSessionCookie(cookies: Cookies, lucia: CandlebookLucia): void {
	const cookie = lucia.createBlankSessionCookie();
	cookies.set(cookie.name, cookie.value, { ...cookie.attributes, path: '/' });
}
