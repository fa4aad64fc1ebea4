import { createServer, type IncomingMessage, type Server, type ServerResponse } from 'node:http';
import { clientAddress, type AddressSource } from './client-address';
import { corsHeaders, preflightHeaders } from './cors';
import { NON_PAGE_CSP, SECURITY_HEADERS } from '../http/security-headers';
import { bearerToken } from './credentials';
import { isStorable, matchesIfNoneMatch, type ImmutableCache, type StoredAnswer } from './immutable-cache';
import { rateLimitHeaders, type FixedWindowLimiter } from './rate-limit';

/** adapter-node's `handler` (build/handler.js): a connect-style middleware. */
export type AppHandler = (request: IncomingMessage, response: ServerResponse, next: () => void) => unknown;

export interface FrontServerOptions {
	app: AppHandler;
	cache: ImmutableCache;
	/** Null: anonymous API clients are not limited. */
	limiter: FixedWindowLimiter | null;
	addressSource: AddressSource;
	/** Told of every answer the front server gives itself (the app logs its own answers). */
	log?: (entry: EdgeLogEntry) => void;
}

/** A request answered before the app: a cache replay or a rate-limit refusal, as the app's request log has them. */
export interface EdgeLogEntry {
	method: string;
	/** Without the query string, which may hold tokens. */
	path: string;
	status: number;
	durationMs: number;
	answeredBy: 'edge-cache' | 'rate-limit';
}

/** RFC 9211 Cache-Status names this cache by this identifier. */
const CACHE_NAME = 'candlebook-edge';
/** Headers that describe one transfer or one request, never the stored answer. */
const PER_REQUEST_HEADERS = new Set([
	'connection',
	'keep-alive',
	'transfer-encoding',
	'content-length',
	'date',
	'cache-status',
	'ratelimit',
	'ratelimit-policy'
]);
// The same `type` and `title` as problemBody(429) in src/lib/server/api/problem.ts, which imports
// SvelteKit and so cannot load here (a unit test keeps the two equal).
export const TOO_MANY_REQUESTS_TYPE = '/docs/problems#too-many-requests';
export const TOO_MANY_REQUESTS_TITLE = 'Too many requests';

function pathOf(target: string): string {
	const query = target.indexOf('?');
	return query === -1 ? target : target.slice(0, query);
}

function replay(request: IncomingMessage, response: ServerResponse, answer: StoredAnswer): void {
	for (const [name, value] of answer.headers) response.setHeader(name, value);
	response.setHeader('cache-status', `${CACHE_NAME}; hit`);
	if (matchesIfNoneMatch(request.headers['if-none-match'], answer.etag)) {
		response.writeHead(304).end();
		return;
	}
	response.setHeader('content-length', answer.body.length);
	response.writeHead(200);
	response.end(request.method === 'HEAD' ? undefined : answer.body);
}

/**
 * Keeps a copy of what the app sends, and stores it when the finished answer is storable. Only the
 * bytes and the headers the app set are kept; per-request headers are added again on every replay.
 */
function captureInto(cache: ImmutableCache, target: string, response: ServerResponse): void {
	const chunks: Buffer[] = [];
	let bytes = 0;
	let overflow = false;
	const write = response.write.bind(response) as (...args: unknown[]) => boolean;
	const end = response.end.bind(response) as (...args: unknown[]) => ServerResponse;
	const keep = (chunk: unknown, encoding: unknown) => {
		if (overflow || chunk === undefined || chunk === null || typeof chunk === 'function') return;
		const buffer =
			typeof chunk === 'string'
				? Buffer.from(chunk, typeof encoding === 'string' ? (encoding as BufferEncoding) : 'utf8')
				: Buffer.from(chunk as Uint8Array);
		bytes += buffer.length;
		if (bytes > cache.maxEntryBytes) {
			overflow = true;
			chunks.length = 0;
		} else chunks.push(buffer);
	};
	response.write = ((chunk: unknown, ...rest: unknown[]) => {
		keep(chunk, rest[0]);
		return write(chunk, ...rest);
	}) as ServerResponse['write'];
	response.end = ((chunk?: unknown, ...rest: unknown[]) => {
		keep(chunk, rest[0]);
		const headers = response.getHeaders();
		if (!overflow && isStorable(response.statusCode, headers)) {
			const kept: Array<[string, string]> = [];
			for (const [name, value] of Object.entries(headers)) {
				if (PER_REQUEST_HEADERS.has(name) || value === undefined) continue;
				kept.push([name, Array.isArray(value) ? value.join(', ') : String(value)]);
			}
			const etag = typeof headers.etag === 'string' ? headers.etag : null;
			cache.set(target, { headers: kept, body: Buffer.concat(chunks), etag });
		}
		return end(chunk, ...rest);
	}) as ServerResponse['end'];
}

function tooManyRequests(response: ServerResponse, retryAfter: number, limit: number, windowSeconds: number): void {
	const body = JSON.stringify({
		type: TOO_MANY_REQUESTS_TYPE,
		title: TOO_MANY_REQUESTS_TITLE,
		status: 429,
		detail: `Anonymous clients may make ${limit} API requests every ${windowSeconds} s; retry after ${retryAfter} s, or send an API token.`
	});
	response.setHeader('retry-after', String(retryAfter));
	response.setHeader('content-type', 'application/problem+json');
	response.setHeader('cache-control', 'no-store');
	response.setHeader('content-length', Buffer.byteLength(body));
	response.writeHead(429).end(body);
}

/** The request path through the front server, as a function so tests can drive it without a socket. */
export function frontRequestHandler(options: FrontServerOptions) {
	const { app, cache, limiter, addressSource, log } = options;
	const notFound = (response: ServerResponse) => () => {
		if (!response.headersSent) response.writeHead(404, { 'content-type': 'text/plain' });
		response.end('Not found');
	};

	return (request: IncomingMessage, response: ServerResponse): void => {
		const started = performance.now();
		const method = request.method ?? 'GET';
		const target = request.url ?? '/';
		const pathname = pathOf(target);
		const logged = (answeredBy: EdgeLogEntry['answeredBy']) =>
			log?.({
				method,
				path: pathname,
				status: response.statusCode,
				durationMs: Math.round((performance.now() - started) * 10) / 10,
				answeredBy
			});

		// The app sets these too; set here they also cover what this server answers itself.
		for (const [name, value] of Object.entries(SECURITY_HEADERS)) response.setHeader(name, value);
		response.setHeader('content-security-policy', NON_PAGE_CSP);

		const preflight = preflightHeaders(method, pathname, request.headers['access-control-request-method']);
		if (preflight) {
			response.writeHead(204, preflight).end();
			return;
		}

		const cors = corsHeaders(method, pathname);
		if (cors) for (const [name, value] of Object.entries(cors)) response.setHeader(name, value);

		const anonymous = bearerToken(request.headers.authorization) === null;
		if (limiter && anonymous && pathname.startsWith('/api/')) {
			const decision = limiter.take(clientAddress(request, addressSource));
			for (const [name, value] of Object.entries(rateLimitHeaders(limiter.policy, decision))) {
				response.setHeader(name, value);
			}
			if (!decision.allowed) {
				tooManyRequests(response, decision.resetSeconds, limiter.policy.limit, limiter.policy.windowSeconds);
				logged('rate-limit');
				return;
			}
		}

		const readable = method === 'GET' || method === 'HEAD';
		if (readable && anonymous && request.headers.cookie === undefined && cache.enabled) {
			const stored = cache.get(target);
			if (stored) {
				replay(request, response, stored);
				logged('edge-cache');
				return;
			}
			if (method === 'GET') {
				response.setHeader('cache-status', `${CACHE_NAME}; fwd=miss`);
				captureInto(cache, target, response);
			}
		}
		app(request, response, notFound(response));
	};
}

/**
 * Idle keep-alive connections outlive a load balancer's usual 60 s idle timeout (common practice), so
 * the server never closes a connection a client or proxy is just about to reuse; Node's 5 s default
 * races clients under load, which then see ECONNRESET.
 */
const KEEP_ALIVE_MS = 65_000;

export function createFrontServer(options: FrontServerOptions): Server {
	const server = createServer(frontRequestHandler(options));
	server.keepAliveTimeout = KEEP_ALIVE_MS;
	server.headersTimeout = KEEP_ALIVE_MS + 1_000;
	return server;
}
