import { error, redirect, type Handle } from '@sveltejs/kit';
import { groupStandingFor } from '../accounts/group-lookup';
import { authenticateToken } from '../accounts/token-service';
import { problem } from '../api/problem';
import { bearerToken } from '../edge/credentials';
import { crossSiteRefusal } from '../http/cross-site-writes';
import { logger } from '../logger';
import { decideAccess, findAccessRule, formActionName, type Credentials } from './access-policy';
import { SESSION_COOKIE } from './lucia';
import { appLucia } from './request-lucia';
import { clearSessionCookie, setSessionCookie, validateSessionToken } from './session';

const isApi = (url: URL) => url.pathname.startsWith('/api/');
const EMPTY_COOKIE_CHALLENGE = { 'www-authenticate': 'Bearer' };

/**
 * Who is asking: a browser session (cookie) on any route, or an API token (`Authorization: Bearer`)
 * on API routes. A request with neither does no database work at all. A credential that is present
 * but empty or malformed is a bad credential, never anonymity: the API answers it 401.
 */
export const handleAuth: Handle = async ({ event, resolve }) => {
	event.locals.user = null;
	event.locals.session = null;
	event.locals.apiToken = null;
	event.locals.badBearer = false;
	const api = isApi(event.url);
	const cookieToken = event.cookies.get(SESSION_COOKIE);
	const authorization = api ? event.request.headers.get('authorization') : null;
	if (cookieToken === undefined && authorization === null) return resolve(event);

	if (authorization !== null) {
		const presented = bearerToken(authorization);
		const token = presented ? await authenticateToken(event.locals.em, presented) : null;
		if (!token) {
			event.locals.badBearer = true;
			return resolve(event);
		}
		const { id, email, displayName, roles } = token.user;
		event.locals.user = { id, email, displayName, roles };
		event.locals.apiToken = { id: token.id, scopes: token.scopes };
		return resolve(event);
	}

	if (!cookieToken) {
		event.cookies.delete(SESSION_COOKIE, { path: '/', secure: event.url.protocol === 'https:' });
		if (api) {
			return problem(
				401,
				'The session cookie is empty: sign in again, or send an API token.',
				{},
				EMPTY_COOKIE_CHALLENGE
			);
		}
		return resolve(event);
	}

	const lucia = await appLucia();
	const { session, user } = await validateSessionToken(lucia, cookieToken);
	if (!session || user.suspendedAt) {
		if (session) await lucia.invalidateSession(session.id);
		clearSessionCookie(event.cookies, lucia);
		return resolve(event);
	}
	// lucia extended the session (less than half its lifetime was left): send the cookie again.
	if (session.fresh) setSessionCookie(event.cookies, lucia, cookieToken, session.expiresAt);
	event.locals.session = session;
	event.locals.user = { id: user.id, email: user.email, displayName: user.displayName, roles: user.roles };
	return resolve(event);
};

/**
 * Refuses API writes that a session cookie signs in when they come from another origin (403
 * problem+json naming why); see crossSiteRefusal for the rule. Token calls are unaffected.
 */
export const handleCrossSiteWrites: Handle = ({ event, resolve }) => {
	const reason = crossSiteRefusal({
		method: event.request.method,
		pathname: event.url.pathname,
		origin: event.request.headers.get('origin'),
		fetchSite: event.request.headers.get('sec-fetch-site'),
		siteOrigin: event.url.origin,
		cookieAuthenticated: event.locals.session !== null && event.locals.apiToken === null
	});
	return reason ? problem(403, reason) : resolve(event);
};

/**
 * Applies the access policy (src/lib/server/auth/access-policy.ts) to every request before any route
 * code runs: 401 without valid credentials, 403 with credentials that lack the right.
 */
export const handleGuard: Handle = async ({ event, resolve }) => {
	const routeId = event.route.id;
	if (routeId === null) return resolve(event);
	const api = isApi(event.url);
	const method = event.request.method;
	const action = method === 'POST' && !api ? formActionName(event.url) : undefined;
	const rule = findAccessRule(routeId, method, action);
	if (!rule) {
		logger.error({ routeId, method, action }, 'route missing from the access policy');
		if (api) return problem(403, 'This route is not open to anyone.');
		error(403, 'This page is not open to anyone.');
	}
	if (api && event.locals.badBearer) {
		return problem(
			401,
			bearerToken(event.request.headers.get('authorization'))
				? 'The API token is unknown, revoked or expired.'
				: 'The Authorization header holds no API token: send `Authorization: Bearer cbk_…`.',
			{},
			{
				'www-authenticate': 'Bearer error="invalid_token"'
			}
		);
	}
	const { user, apiToken } = event.locals;
	const credentials: Credentials | null = user
		? { roles: user.roles, via: apiToken ? { scopes: apiToken.scopes } : 'session' }
		: null;
	const decision = await decideAccess(rule, credentials, () =>
		groupStandingFor(event.locals.em, user!.id, event.params.slug)
	);
	if (decision.allow) return resolve(event);
	if (api) {
		const headers: Record<string, string> = decision.status === 401 ? { 'www-authenticate': 'Bearer' } : {};
		return problem(decision.status, decision.reason, {}, headers);
	}
	if (decision.status === 401 && method === 'GET') {
		redirect(303, `/sign-in?next=${encodeURIComponent(event.url.pathname + event.url.search)}`);
	}
	error(decision.status, decision.reason);
};
