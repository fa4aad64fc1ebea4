import type { Handle, HandleServerError, ServerInit } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { PROBLEM_CONTENT_TYPE, problem } from '$lib/server/api/problem';
import { handleAuth, handleCrossSiteWrites, handleGuard } from '$lib/server/auth/request-hooks';
import { getConfig } from '$lib/server/config';
import { closeOrm, getOrm, getReadOrm, usesReadReplica } from '$lib/server/db';
import { handleCors } from '$lib/server/edge/cors-hook';
import { handleSecurityHeaders } from '$lib/server/http/security-headers-hook';
import { getAppJobQueue, stopAppJobQueue } from '$lib/server/jobs/app-queue';
import { logger } from '$lib/server/logger';
import { handleTheme } from '$lib/server/theme';
import { handleVisitorFormLimit } from '$lib/server/visitor-form-limit';

export const init: ServerInit = async () => {
	const config = getConfig();
	await getOrm();
	if (config.DATABASE_READ_URL) await getReadOrm();
	// Work queued fits from the start, including any left over from before a restart.
	if (config.CANDLEBOOK_IN_PROCESS_WORKER === 'true') {
		getAppJobQueue().catch((error: unknown) => logger.error({ err: error }, 'the job queue did not start'));
	}
	// adapter-node keeps the process alive while the pool is open; close it when the server stops.
	process.once('sveltekit:shutdown', () => void stopAppJobQueue().finally(() => closeOrm()));
};

const handleRequestLog: Handle = async ({ event, resolve }) => {
	const started = performance.now();
	event.locals.requestId = crypto.randomUUID();
	const response = await resolve(event);
	logger.info(
		{
			requestId: event.locals.requestId,
			method: event.request.method,
			path: event.url.pathname,
			status: response.status,
			durationMs: Math.round((performance.now() - started) * 10) / 10
		},
		'request'
	);
	return response;
};

const handleDb: Handle = async ({ event, resolve }) => {
	const orm = usesReadReplica(event.request.method, event.url.pathname) ? await getReadOrm() : await getOrm();
	event.locals.em = orm.em.fork();
	return resolve(event);
};

/** Every error under /api is RFC 9457 problem+json, whichever part of the stack produced it. */
const handleApiProblems: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	if (!event.url.pathname.startsWith('/api/') || response.status < 400) return response;
	if (response.headers.get('content-type')?.startsWith(PROBLEM_CONTENT_TYPE)) return response;
	let body: Partial<App.Error> = {};
	try {
		body = (await response.clone().json()) as Partial<App.Error>;
	} catch {
		// Not JSON (e.g. a plain-text error page); keep only the status.
	}
	const headers = new Headers(response.headers);
	headers.delete('content-length');
	headers.delete('content-type');
	return problem(response.status, body.message, body.errors ? { errors: body.errors } : {}, headers);
};

export const handle = sequence(
	handleRequestLog,
	handleSecurityHeaders,
	handleCors,
	handleDb,
	handleApiProblems,
	handleAuth,
	handleVisitorFormLimit,
	handleCrossSiteWrites,
	handleGuard,
	handleTheme
);

export const handleError: HandleServerError = ({ error, event, status, message }) => {
	if (status === 404) return { message };
	const errorId = crypto.randomUUID();
	logger.error({ errorId, path: event.url.pathname, err: error }, 'unhandled error');
	return { message: 'An unexpected error occurred.', errorId };
};
