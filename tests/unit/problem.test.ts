import { describe, expect, test } from 'vitest';
import { z } from 'zod';
import { fieldErrors } from '../../src/lib/server/api/errors';
import { problem, problemBody } from '../../src/lib/server/api/problem';
import { readBodyWithLimit, readJsonBody } from '../../src/lib/server/api/request-body';
import { ProblemSchema } from '../../src/lib/server/api/schema-registry';

describe('RFC 9457 problem details', () => {
	test('a problem response carries the problem+json media type and the RFC members', async () => {
		const response = problem(404, 'No relation "x"', { instance: '/api/v1/relations/x' });
		expect(response.status).toBe(404);
		expect(response.headers.get('content-type')).toBe('application/problem+json');
		const body = await response.json();
		// RFC 9457 §3.1: type, title, status, detail, instance.
		expect(body).toEqual({
			type: '/docs/problems#not-found',
			title: 'Not found',
			status: 404,
			detail: 'No relation "x"',
			instance: '/api/v1/relations/x'
		});
		expect(ProblemSchema.safeParse(body).success).toBe(true);
	});

	test('validation errors name the path of each bad field', () => {
		const schema = z.object({ stars: z.array(z.object({ period_days: z.number().positive() })) });
		const parsed = schema.safeParse({ stars: [{ period_days: 3 }, { period_days: -1 }] });
		expect(parsed.success).toBe(false);
		const errors = fieldErrors(parsed.error!);
		expect(errors).toHaveLength(1);
		expect(errors[0].path).toBe('stars/1/period_days');
		expect(problemBody(422, 'bad', { errors }).errors).toEqual(errors);
	});
});

describe('request body limits', () => {
	const request = (body: string, headers: Record<string, string> = {}) =>
		new Request('http://127.0.0.1/api/v1/x', { method: 'POST', body, headers });

	test('a body within the limit is read whole', async () => {
		const bytes = await readBodyWithLimit(request('hello'), 5);
		expect(new TextDecoder().decode(bytes)).toBe('hello');
	});

	test('a body over the limit is refused with 413, whatever Content-Length says', async () => {
		await expect(readBodyWithLimit(request('hello!'), 5)).rejects.toMatchObject({ status: 413 });
		await expect(readBodyWithLimit(request('hi', { 'content-length': '999' }), 5)).rejects.toMatchObject({
			status: 413
		});
	});

	test('JSON bodies are type-checked, parsed and validated', async () => {
		const schema = z.object({ n: z.number() });
		await expect(readJsonBody(request('{"n":1}', { 'content-type': 'text/plain' }), schema, 100)).rejects.toMatchObject(
			{ status: 415 }
		);
		await expect(readJsonBody(request('{', { 'content-type': 'application/json' }), schema, 100)).rejects.toMatchObject(
			{ status: 400 }
		);
		await expect(
			readJsonBody(request('{"n":"1"}', { 'content-type': 'application/json' }), schema, 100)
		).rejects.toMatchObject({
			status: 422,
			body: { errors: [{ path: 'n' }] }
		});
		expect(await readJsonBody(request('{"n":1}', { 'content-type': 'application/json' }), schema, 100)).toEqual({
			n: 1
		});
	});
});
