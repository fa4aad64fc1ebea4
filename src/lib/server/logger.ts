import pino from 'pino';

/**
 * Structured JSON logs. Request logs carry method, path (without the query string, which may hold
 * tokens), status and duration; headers and bodies are never logged.
 */
export const logger = pino({
	level: process.env.LOG_LEVEL ?? 'info',
	base: { service: 'candlebook' },
	redact: { paths: ['*.authorization', '*.cookie', '*.password', '*.token'], censor: '[redacted]' }
});
