/**
 * The production server: a plain node:http front server that answers frozen public versions from
 * memory, counts anonymous API requests, and hands everything else to the SvelteKit app
 * (adapter-node's build/handler.js). Reads HOST, PORT, SHUTDOWN_TIMEOUT like adapter-node's own
 * entry, plus CANDLEBOOK_ANON_RATE_LIMIT and CANDLEBOOK_EDGE_CACHE_BYTES.
 *   node --import tsx src/lib/server/ops/serve.ts
 */
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { getConfig, publicOriginProblem } from '../config';
import { addressSourceFrom } from '../edge/client-address';
import { createFrontServer, type AppHandler } from '../edge/front-server';
import { ImmutableCache } from '../edge/immutable-cache';
import { FixedWindowLimiter } from '../edge/rate-limit';
import { logger } from '../logger';
import { PROJECT_ROOT } from './project-paths';

const host = process.env.HOST ?? '0.0.0.0';
const port = Number(process.env.PORT ?? 3000);
const originProblem = publicOriginProblem(process.env, host);
if (originProblem) {
	console.error(`[candlebook] ${originProblem}`);
	process.exit(1);
}
// adapter-node takes event.url from ORIGIN when set and otherwise from the request's Host header,
// which any client can write; on loopback the listening address is the origin.
process.env.ORIGIN ??= `http://${host.includes(':') ? `[${host}]` : host}:${port}`;
const config = getConfig();
const handlerFile = join(PROJECT_ROOT, 'build', 'handler.js');
if (!existsSync(handlerFile)) {
	console.error(`[candlebook] ${handlerFile} is missing: run \`npm run build\` first`);
	process.exit(1);
}
// Importing the handler runs the app's `init` hook (database, job queue) before the first request.
const { handler } = (await import(pathToFileURL(handlerFile).href)) as { handler: AppHandler };

const rate = config.CANDLEBOOK_ANON_RATE_LIMIT;
const server = createFrontServer({
	app: handler,
	cache: new ImmutableCache({ maxBytes: config.CANDLEBOOK_EDGE_CACHE_BYTES }),
	limiter: rate ? new FixedWindowLimiter({ name: 'anonymous', ...rate }) : null,
	addressSource: addressSourceFrom(process.env),
	log: (entry) => logger.info(entry, 'request')
});

server.listen(port, host, () => {
	logger.info(
		{
			host,
			port,
			anonymousRateLimit: rate ? `${rate.limit}/${rate.windowSeconds}s` : 'off',
			cacheBytes: config.CANDLEBOOK_EDGE_CACHE_BYTES
		},
		'front server listening'
	);
	console.log(`Listening on http://${host}:${port}`);
});

// As adapter-node's own entry does: stop accepting, let requests in flight finish, then tell the app
// (its `sveltekit:shutdown` listener closes the job queue and the database pool).
const shutdownSeconds = Number.parseInt(process.env.SHUTDOWN_TIMEOUT ?? '30', 10);
let stopping = false;
function shutdown(reason: 'SIGINT' | 'SIGTERM'): void {
	if (stopping) return;
	stopping = true;
	server.closeIdleConnections();
	server.close(() => {
		(process.emit as (event: string, ...args: unknown[]) => boolean)('sveltekit:shutdown', reason);
		setTimeout(() => process.exit(0), 10_000).unref();
	});
	setTimeout(() => server.closeAllConnections(), shutdownSeconds * 1000).unref();
}
process.on('SIGINT', () => shutdown('SIGINT'));
process.on('SIGTERM', () => shutdown('SIGTERM'));
