import { z } from 'zod';

/**
 * Every request and response schema of the public API is registered here once, with a stable id, so the
 * OpenAPI document can be generated from the same schemas that validate traffic.
 */
export interface ApiSchemaMeta {
	id: string;
	description?: string;
	/** Operations (e.g. `POST /api/v1/fits`) whose request body this schema validates. */
	requestFor?: string[];
	/** Operations whose successful (2xx) JSON response this schema describes. */
	responseFor?: string[];
}

export const apiSchemas = z.registry<ApiSchemaMeta>();

/** Every registered schema's metadata, in registration order (the OpenAPI generator reads it). */
export const registeredApiSchemas: ApiSchemaMeta[] = [];

export function registerApiSchema<T extends z.ZodType>(schema: T, meta: ApiSchemaMeta): T {
	apiSchemas.add(schema, meta);
	registeredApiSchemas.push(meta);
	return schema;
}

export interface OperationParameter {
	name: string;
	in: 'query' | 'header';
	required?: boolean;
	description?: string;
	/** A JSON Schema; a plain string when absent. */
	schema?: Record<string, unknown>;
}

export interface OperationResponse {
	description?: string;
	/** A registered schema id; absent for a body without a schema (or no body, e.g. 304). */
	schema?: string;
	/** Defaults to `application/json`; an empty list documents a response without a body. */
	mediaTypes?: string[];
}

/** What an operation's OpenAPI entry says beyond its request and 200 JSON schemas. */
export interface OperationDoc {
	description?: string;
	parameters?: OperationParameter[];
	/** Keyed by status (`'200'`, `'202'`, `'304'`…); replaces the generated entry for that status. */
	responses?: Record<string, OperationResponse>;
}

/** Keyed by operation, e.g. `GET /api/v1/relations/{slug}` (the OpenAPI path template). */
export const operationDocs = new Map<string, OperationDoc>();

/** Adds query parameters, statuses and media types to an operation's OpenAPI entry. */
export function describeOperation(operation: string, doc: OperationDoc): void {
	const previous = operationDocs.get(operation);
	operationDocs.set(operation, {
		description: doc.description ?? previous?.description,
		parameters: [...(previous?.parameters ?? []), ...(doc.parameters ?? [])],
		responses: { ...previous?.responses, ...doc.responses }
	});
}

export const FieldErrorSchema = registerApiSchema(z.object({ path: z.string(), message: z.string() }), {
	id: 'FieldError',
	description: 'One problem with one part of the request.'
});

export const ProblemSchema = registerApiSchema(
	z.object({
		type: z.string(),
		title: z.string(),
		status: z.number().int(),
		detail: z.string().optional(),
		instance: z.string().optional(),
		errors: z.array(FieldErrorSchema).optional()
	}),
	{ id: 'Problem', description: 'RFC 9457 problem details (application/problem+json).' }
);

export const HealthSchema = registerApiSchema(
	z.object({
		status: z.enum(['ok', 'ready', 'not_ready']),
		checks: z.record(z.string(), z.object({ ok: z.boolean(), detail: z.string().optional() })).optional()
	}),
	{ id: 'Health', description: 'Liveness or readiness of the service.' }
);
