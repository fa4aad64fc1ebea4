import { Validator } from '@seriousme/openapi-schema-validator';
import { describe, expect, test } from 'vitest';
import '../../src/lib/server/api/account-schemas';
import { buildOpenApiDocument, openApiPath } from '../../src/lib/server/api/openapi';
import { describeOperation, operationDocs } from '../../src/lib/server/api/schema-registry';
import { ACCESS_POLICY } from '../../src/lib/server/auth/access-policy';

describe('the generated OpenAPI document', () => {
	const document = buildOpenApiDocument('http://127.0.0.1:3000');

	test('is valid OpenAPI 3.1 by the official JSON Schema (@seriousme/openapi-schema-validator)', async () => {
		const validator = new Validator();
		const result = await validator.validate(document);
		expect(result.errors ?? []).toEqual([]);
		expect(result.valid).toBe(true);
		expect(validator.version).toBe('3.1');
	});

	test('has one operation for every API row of the access policy', () => {
		const expected = ACCESS_POLICY.filter((rule) => rule.route.startsWith('/api/') && rule.method !== '*')
			.map((rule) => `${rule.method} ${openApiPath(rule.route)}`)
			.filter((key) => !key.endsWith('null'))
			.sort();
		const paths = document.paths as Record<string, Record<string, unknown>>;
		const actual = Object.entries(paths)
			.flatMap(([path, operations]) => Object.keys(operations).map((method) => `${method.toUpperCase()} ${path}`))
			.sort();
		expect(actual).toEqual(expected);
		expect(actual.length).toBeGreaterThan(0);
	});

	test('carries the registered zod schemas as components, with the problem type for errors', () => {
		const schemas = (document.components as { schemas: Record<string, unknown> }).schemas;
		expect(Object.keys(schemas)).toEqual(expect.arrayContaining(['Problem', 'FieldError']));
		expect(schemas.Problem).toMatchObject({
			type: 'object',
			required: expect.arrayContaining(['type', 'title', 'status'])
		});
	});
});

interface OperationShape {
	description?: string;
	parameters: unknown[];
	responses: Record<string, { description: string; content?: Record<string, { schema?: unknown }> }>;
}

describe('operations described beyond their schemas', () => {
	test('query parameters, extra statuses and media types appear in the operation', () => {
		describeOperation('GET /api/v1/bands', {
			description: 'Every band Candlebook knows.',
			parameters: [{ name: 'system', in: 'query', description: 'photometric system' }],
			responses: { '304': { description: 'Not modified', mediaTypes: [] }, '200': { mediaTypes: ['text/csv'] } }
		});
		const operation = (
			buildOpenApiDocument('http://127.0.0.1:3000').paths as Record<string, Record<string, OperationShape>>
		)['/api/v1/bands'].get;
		operationDocs.delete('GET /api/v1/bands');
		expect(operation.description).toBe('Every band Candlebook knows.');
		expect(operation.parameters).toContainEqual({
			name: 'system',
			in: 'query',
			required: false,
			description: 'photometric system',
			schema: { type: 'string' }
		});
		expect(operation.responses['304']).toEqual({ description: 'Not modified' });
		expect(Object.keys(operation.responses['200'].content ?? {})).toEqual(['text/csv']);
	});

	test('a revision documents its JSON schema for JSON only; CSV and VOTable are text, the archive bytes', () => {
		const paths = buildOpenApiDocument('http://127.0.0.1:3000').paths as Record<string, Record<string, OperationShape>>;
		const revision = paths['/api/v1/calibrator-sets/{slug}/revisions/{n}'].get.responses['200'].content!;
		expect(revision['application/json'].schema).toEqual({ $ref: '#/components/schemas/CalibratorRevisionExport' });
		expect(revision['text/csv'].schema).toEqual({ type: 'string' });
		expect(revision['application/x-votable+xml'].schema).toEqual({ type: 'string' });
		const archive = paths['/api/v1/export'].get.responses['200'].content!;
		expect(archive['application/zip'].schema).toEqual({ type: 'string', contentMediaType: 'application/zip' });
	});
});
