import { z } from 'zod';
import { ACCESS_POLICY, type AccessRule } from '../auth/access-policy';
import { SESSION_COOKIE } from '../auth/lucia';
import './all-schemas';
import { apiSchemas, operationDocs, registeredApiSchemas, type OperationResponse } from './schema-registry';

/**
 * The OpenAPI 3.1 document, generated: paths from the access-policy table (every API route is there),
 * component schemas from the same zod schemas that validate traffic. Nothing is written by hand twice.
 */
type JsonObject = Record<string, unknown>;

const SCHEMA_REF = (id: string) => `#/components/schemas/${id}`;

/** `/api/v1/groups/[slug]/members` → `/api/v1/groups/{slug}/members` (catch-all routes are not operations). */
export function openApiPath(route: string): string | null {
	if (route.includes('[...')) return null;
	return route.replace(/\[(\w+)\]/g, '{$1}');
}

/** Request schemas may transform their input (e.g. a JSON query parameter); the document describes what clients send. */
function componentSchemas(): Record<string, JsonObject> {
	const { schemas } = z.toJSONSchema(apiSchemas, {
		target: 'draft-2020-12',
		uri: SCHEMA_REF,
		io: 'input',
		unrepresentable: 'any'
	}) as {
		schemas: Record<string, JsonObject>;
	};
	// Each component is embedded in the document, so the per-schema $schema and $id are dropped.
	return Object.fromEntries(
		Object.entries(schemas).map(([id, schema]) => {
			const { $schema: _schema, $id: _id, ...rest } = schema;
			return [id, rest];
		})
	);
}

function schemaFor(operation: string, role: 'requestFor' | 'responseFor'): string | null {
	return registeredApiSchemas.find((meta) => meta[role]?.includes(operation))?.id ?? null;
}

/** A registered schema describes JSON bodies; other media types (CSV, VOTable, zip) are documented as text or bytes. */
function mediaSchema(type: string, response: OperationResponse): JsonObject {
	if (type.endsWith('json')) return response.schema ? { $ref: SCHEMA_REF(response.schema) } : {};
	if (type.startsWith('text/') || type.endsWith('+xml')) return { type: 'string' };
	return { type: 'string', contentMediaType: type };
}

function documentedResponse(status: string, response: OperationResponse): JsonObject {
	const mediaTypes = response.mediaTypes ?? ['application/json'];
	return {
		description: response.description ?? (status.startsWith('2') ? 'Success' : `HTTP ${status}`),
		...(mediaTypes.length
			? { content: Object.fromEntries(mediaTypes.map((type) => [type, { schema: mediaSchema(type, response) }])) }
			: {})
	};
}

function operationFor(rule: AccessRule, path: string): JsonObject {
	const key = `${rule.method} ${path}`;
	const request = schemaFor(key, 'requestFor');
	const response = schemaFor(key, 'responseFor');
	const doc = operationDocs.get(key);
	const parameters = [
		...[...path.matchAll(/\{(\w+)\}/g)].map(([, name]) => ({
			name,
			in: 'path',
			required: true,
			schema: { type: 'string' }
		})),
		...(doc?.parameters ?? []).map((parameter) => ({
			required: false,
			...parameter,
			schema: parameter.schema ?? { type: 'string' }
		}))
	];
	const extraResponses = Object.fromEntries(
		Object.entries(doc?.responses ?? {}).map(([status, entry]) => [status, documentedResponse(status, entry)])
	);
	const problem = { content: { 'application/problem+json': { schema: { $ref: SCHEMA_REF('Problem') } } } };
	const security = rule.audience.kind === 'anyone' ? [{}, { bearer: [] }] : [{ bearer: [] }, { session: [] }];
	return {
		summary: rule.summary,
		...(doc?.description ? { description: doc.description } : {}),
		operationId: `${rule.method.toLowerCase()}${path.replace(/[^A-Za-z0-9]+(\w)?/g, (_, c: string | undefined) => (c ? c.toUpperCase() : ''))}`,
		...(parameters.length ? { parameters } : {}),
		...(request
			? { requestBody: { required: true, content: { 'application/json': { schema: { $ref: SCHEMA_REF(request) } } } } }
			: {}),
		responses: {
			'200': {
				description: 'Success',
				content: { 'application/json': { schema: response ? { $ref: SCHEMA_REF(response) } : {} } }
			},
			...(rule.audience.kind === 'anyone' ? {} : { '401': { description: 'No or bad credentials', ...problem } }),
			'403': { description: 'Credentials lack the right', ...problem },
			default: { description: 'An error (RFC 9457 problem details)', ...problem },
			...extraResponses
		},
		security,
		...(rule.tokenScope && rule.tokenScope !== 'any' ? { 'x-token-scope': rule.tokenScope } : {})
	};
}

export function buildOpenApiDocument(serverUrl: string): JsonObject {
	const paths: Record<string, Record<string, JsonObject>> = {};
	for (const rule of ACCESS_POLICY) {
		if (!rule.route.startsWith('/api/') || rule.method === '*') continue;
		const path = openApiPath(rule.route);
		if (!path) continue;
		paths[path] ??= {};
		paths[path][rule.method.toLowerCase()] = operationFor(rule, path);
	}
	return {
		openapi: '3.1.0',
		info: {
			title: 'Candlebook API',
			version: '1',
			description:
				'Reviewed, versioned Cepheid period–luminosity calibrations. Frozen versions are served by reference (slug@version) with a sha256 digest over their RFC 8785 canonical JSON.'
		},
		servers: [{ url: serverUrl }],
		paths,
		components: {
			schemas: componentSchemas(),
			securitySchemes: {
				bearer: { type: 'http', scheme: 'bearer', description: 'An API token created on the account page.' },
				session: { type: 'apiKey', in: 'cookie', name: SESSION_COOKIE }
			}
		}
	};
}
