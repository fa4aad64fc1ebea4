import type { z } from 'zod';
import { findForbiddenInJson } from '../../calibration/forbidden-characters';
import { fail, fieldErrors } from './errors';

/**
 * Reads a request body up to `maxBytes`, answering 413 before buffering more. The Content-Length
 * header is checked first, then the bytes actually received (a client may lie or stream).
 */
export async function readBodyWithLimit(
	request: Request,
	maxBytes: number,
	/**
	 * `cancel` (default) stops the upload at once; `leave` stops reading but keeps the connection, so the
	 * 413 still reaches the client (the caller answers with `connection: close`): adapter-node's cancel
	 * destroys the socket before any answer is written.
	 */
	onExcess: 'cancel' | 'leave' = 'cancel'
): Promise<Uint8Array> {
	const declared = Number(request.headers.get('content-length') ?? NaN);
	if (Number.isFinite(declared) && declared > maxBytes) tooLarge(maxBytes);
	if (!request.body) return new Uint8Array();
	const chunks: Uint8Array[] = [];
	let received = 0;
	const reader = request.body.getReader();
	for (;;) {
		const { done, value } = await reader.read();
		if (done) break;
		received += value.byteLength;
		if (received > maxBytes) {
			if (onExcess === 'cancel') await reader.cancel();
			else reader.releaseLock();
			tooLarge(maxBytes);
		}
		chunks.push(value);
	}
	const body = new Uint8Array(received);
	let offset = 0;
	for (const chunk of chunks) {
		body.set(chunk, offset);
		offset += chunk.byteLength;
	}
	return body;
}

function tooLarge(maxBytes: number): never {
	fail(413, `The request body is larger than this endpoint accepts (${maxBytes} bytes).`);
}

const MAY_HOLD_FORBIDDEN = /\\u|[\uFFFE\uFFFF]/;

/**
 * Parses a JSON body: 400 when it is not JSON, 422 naming the JSON path of a string that holds a
 * character no text here may hold (NUL, an unpaired surrogate, U+FFFE/U+FFFF, other C0 controls).
 */
export function parseJsonBytes(bytes: Uint8Array): unknown {
	const text = new TextDecoder().decode(bytes);
	let value: unknown;
	try {
		value = JSON.parse(text);
	} catch (cause) {
		fail(400, `The body is not valid JSON: ${(cause as Error).message}`);
	}
	// Valid JSON carries a control character or a lone surrogate only as a \u escape, so a body with
	// neither an escape nor a raw U+FFFE/U+FFFF (most bodies, and large ones) needs no walk.
	const forbidden = MAY_HOLD_FORBIDDEN.test(text) ? findForbiddenInJson(value) : null;
	if (forbidden)
		fail(422, `The body has a character Candlebook does not store at ${forbidden.path}.`, [
			{ path: forbidden.path, message: forbidden.reason }
		]);
	return value;
}

/** Reads, size-limits and validates a JSON body against a zod schema (422 with field errors). */
export async function readJsonBody<T extends z.ZodType>(
	request: Request,
	schema: T,
	maxBytes: number
): Promise<z.infer<T>> {
	const type = request.headers.get('content-type') ?? '';
	if (!/^application\/([a-z.+-]*\+)?json\b/i.test(type)) fail(415, 'Send the body as application/json.');
	const value = parseJsonBytes(await readBodyWithLimit(request, maxBytes));
	const parsed = schema.safeParse(value);
	if (!parsed.success) fail(422, 'The request body does not match the schema.', fieldErrors(parsed.error));
	return parsed.data;
}
