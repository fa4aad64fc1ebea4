/** Environment for the production server (adapter-node) on loopback. */
export function serverEnvironment(databaseUrl: string, port = process.env.PORT ?? '3000'): NodeJS.ProcessEnv {
	const host = process.env.HOST ?? '127.0.0.1';
	return {
		...process.env,
		DATABASE_URL: databaseUrl,
		HOST: host,
		PORT: port,
		ORIGIN: process.env.ORIGIN ?? `http://${host}:${port}`,
		// adapter-node's own ceiling; each route enforces a smaller limit of its own (413 problem+json).
		BODY_SIZE_LIMIT: process.env.BODY_SIZE_LIMIT ?? '64M'
	};
}
