import { expect, type APIRequestContext, type APIResponse } from '@playwright/test';
import { Ajv2020, type ValidateFunction } from 'ajv/dist/2020.js';
import addFormats from 'ajv-formats';

/**
 * Checks a live response against the app's own OpenAPI 3.1 document: the status and media type must
 * be documented for the operation, and a JSON body must validate against the documented schema
 * (JSON Schema 2020-12, checked by ajv). The document is fetched once per worker.
 */
type JsonObject = Record<string, unknown>;
interface MediaEntry {
	schema?: JsonObject;
}
interface ResponseEntry {
	content?: Record<string, MediaEntry>;
}

let documentPromise: Promise<JsonObject> | null = null;
let ajv: Ajv2020 | null = null;
const validators = new Map<string, ValidateFunction>();

async function openApiDocument(request: APIRequestContext): Promise<JsonObject> {
	documentPromise ??= request.get('/api/v1/openapi.json').then(async (response) => {
		expect(response.status(), 'GET /api/v1/openapi.json').toBe(200);
		return (await response.json()) as JsonObject;
	});
	return documentPromise;
}

function compiler(document: JsonObject): Ajv2020 {
	if (ajv) return ajv;
	ajv = new Ajv2020({ strict: false, allErrors: true });
	addFormats.default(ajv);
	// Component schemas are referenced as #/components/schemas/X; register the document under an id
	// so those references resolve from any compiled fragment.
	ajv.addSchema({ $id: 'candlebook-openapi', components: document.components }, 'candlebook-openapi');
	return ajv;
}

function withAbsoluteRefs(schema: unknown): unknown {
	if (Array.isArray(schema)) return schema.map(withAbsoluteRefs);
	if (schema && typeof schema === 'object') {
		return Object.fromEntries(
			Object.entries(schema).map(([key, value]) => [
				key,
				key === '$ref' && typeof value === 'string' && value.startsWith('#/')
					? `candlebook-openapi${value}`
					: withAbsoluteRefs(value)
			])
		);
	}
	return schema;
}

function responseEntry(responses: Record<string, ResponseEntry>, status: number): [string, ResponseEntry] | null {
	const exact = responses[String(status)];
	if (exact) return [String(status), exact];
	const range = responses[`${String(status)[0]}XX`];
	if (range) return [`${String(status)[0]}XX`, range];
	if (status >= 400 && responses.default) return ['default', responses.default];
	return null;
}

/** `operation` is the method and the OpenAPI path template, e.g. `GET /api/v1/relations/{slug}`. */
export async function expectMatchesOpenApi(
	request: APIRequestContext,
	response: APIResponse,
	operation: string
): Promise<void> {
	const document = await openApiDocument(request);
	const [method, path] = operation.split(' ');
	const paths = document.paths as Record<string, Record<string, { responses: Record<string, ResponseEntry> }>>;
	const entry = paths[path]?.[method.toLowerCase()];
	expect(entry, `${operation} is in the OpenAPI document`).toBeDefined();

	const status = response.status();
	const documented = responseEntry(entry.responses, status);
	expect(documented, `${operation} documents status ${status}`).not.toBeNull();
	const [statusKey, responseDoc] = documented!;
	if (!responseDoc.content || status === 304 || status === 204) return;

	const mediaType = (response.headers()['content-type'] ?? '').split(';')[0].trim();
	const media = responseDoc.content[mediaType];
	expect(
		media,
		`${operation} ${statusKey} documents ${mediaType} (documented: ${Object.keys(responseDoc.content).join(', ')})`
	).toBeDefined();
	if (!mediaType.endsWith('json') || !media.schema || Object.keys(media.schema).length === 0) return;

	const key = `${operation} ${statusKey} ${mediaType}`;
	let validate = validators.get(key);
	if (!validate) {
		validate = compiler(document).compile(withAbsoluteRefs(media.schema) as JsonObject);
		validators.set(key, validate);
	}
	const body: unknown = await response.json();
	const valid = validate(body);
	expect(valid, `${key}: ${JSON.stringify(validate.errors?.slice(0, 5))}`).toBe(true);
}
