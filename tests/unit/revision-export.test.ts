import { spawnSync } from 'node:child_process';
import { join } from 'node:path';
import { describe, expect, test } from 'vitest';
import { formatFromAccept } from '../../src/lib/publishing/revision-export';
import { PYTHON } from '../support/astropy';

describe('Accept negotiation for revision exports (RFC 9110 §12.5.1)', () => {
	test.each([
		[null, 'json'],
		['*/*', 'json'],
		['text/csv', 'csv'],
		['text/*', 'csv'],
		['application/x-votable+xml', 'votable'],
		['application/json;q=0.5, application/x-votable+xml;q=0.9', 'votable'],
		// The most specific range sets a type's q: JSON is excluded although */* would allow it.
		['application/json;q=0, */*', 'csv'],
		['text/csv;q=0.2, */*;q=0.1', 'csv'],
		['image/png', 'json'],
		['TEXT/CSV; Q=1', 'csv']
	])('%s → %s', (accept, format) => {
		expect(formatFromAccept(accept)).toBe(format);
	});
});

describe('the standard-library digest check writes numbers as RFC 8785 does', () => {
	test('its ECMAScript Number::toString port agrees with JavaScript for 20 000 doubles', () => {
		// Bit patterns and magnitudes from 1e-12 to 1e25, plus the edges of plain notation (1e-7, 1e21).
		const values = [0.1, 1e21, 1e-7, 1e-6, 5e-324, Number.MAX_VALUE, 1e16, -0.00004, 2.5e-5, 123456789012345680000];
		let seed = 7;
		const next = () => (seed = (seed * 1103515245 + 12345) % 2 ** 31) / 2 ** 31;
		const view = new DataView(new ArrayBuffer(8));
		while (values.length < 20_000) {
			view.setUint32(0, Math.floor(next() * 2 ** 32));
			view.setUint32(4, Math.floor(next() * 2 ** 32));
			const bits = view.getFloat64(0);
			if (Number.isFinite(bits)) values.push(bits);
			values.push((next() * 2 - 1) * 10 ** Math.floor(next() * 38 - 12));
		}
		const script = [
			'import json, sys',
			`source = open(${JSON.stringify(join(import.meta.dirname, '..', 'support', 'python', 'pin_digest_check.py'))}).read()`,
			'scope = {}',
			"exec(source.split('counted = {')[0], scope)",
			'print(json.dumps([scope["es_number"](v) for v in json.load(sys.stdin)]))'
		].join('\n');
		const run = spawnSync(PYTHON, ['-c', script], { input: JSON.stringify(values), encoding: 'utf8' });
		expect(run.status, run.stderr).toBe(0);
		const written = JSON.parse(run.stdout) as string[];
		const differing = values.filter((value, i) => String(value) !== written[i]);
		expect(differing).toEqual([]);
		expect(written).toHaveLength(values.length);
	});
});
