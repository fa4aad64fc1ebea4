import { describe, expect, test } from 'vitest';
import { ConfigError, parseConfig } from '../../src/lib/server/config';

describe('configuration', () => {
	test('a valid environment parses, with defaults', () => {
		const config = parseConfig({ DATABASE_URL: 'postgres://u:p@127.0.0.1:5432/db' });
		expect(config.LOG_LEVEL).toBe('info');
		expect(config.CANDLEBOOK_MAX_UPLOAD_BYTES).toBe(32 * 1024 * 1024);
	});

	test('every bad or missing variable is named in one error', () => {
		const attempt = () => parseConfig({ LOG_LEVEL: 'chatty', CANDLEBOOK_MAX_UPLOAD_BYTES: '12kB' });
		expect(attempt).toThrow(ConfigError);
		expect(attempt).toThrow(/DATABASE_URL/);
		expect(attempt).toThrow(/LOG_LEVEL/);
		expect(attempt).toThrow(/CANDLEBOOK_MAX_UPLOAD_BYTES/);
	});

	test('a non-postgres URL is refused', () => {
		expect(() => parseConfig({ DATABASE_URL: 'mysql://x' })).toThrow(/postgres:\/\//);
	});
});
