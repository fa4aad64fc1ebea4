import { Agent, request } from 'node:http';
import { brotliDecompressSync, gunzipSync, inflateSync } from 'node:zlib';
import { unzipSync } from 'fflate';

/**
 * Plain HTTP for the crawl, on node:http rather than fetch: fetch decodes Content-Encoding by itself
 * and hides the header, so a body could not be proven to have been decoded. Redirects are not
 * followed (their Location is searched like every other header).
 */
export interface CrawlResponse {
	status: number;
	/** Every header as `name: value` lines. */
	headerText: string;
	/** The decoded body as text; for a zip, each entry's name and text, one after another. */
	bodyText: string;
	/** How the body was decoded, e.g. `gzip`, `zip (4 entries)`. */
	decoding: string[];
	milliseconds: number;
}

const agent = new Agent({ keepAlive: true, maxSockets: 4 });

export function closeCrawlAgent() {
	agent.destroy();
}

/** Undoes the Content-Encoding, recording each step in `decoding`. */
export function decodeContent(raw: Buffer, encoding: string | undefined, decoding: string[]): Buffer {
	let body = raw;
	// Content-Encoding lists codings in the order they were applied: undo them from the last.
	const codings = (encoding ?? '')
		.split(',')
		.map((coding) => coding.trim().toLowerCase())
		.filter((coding) => coding && coding !== 'identity')
		.reverse();
	for (const coding of codings) {
		if (coding === 'gzip' || coding === 'x-gzip') body = gunzipSync(body);
		else if (coding === 'br') body = brotliDecompressSync(body);
		else if (coding === 'deflate') body = inflateSync(body);
		else throw new Error(`unknown Content-Encoding ${coding}`);
		decoding.push(coding);
	}
	return body;
}

const ZIP_MAGIC = Buffer.from([0x50, 0x4b, 0x03, 0x04]);

/** A body as searchable text; a zip archive becomes each entry's name and text. */
export function bodyAsText(body: Buffer, decoding: string[]): string {
	if (body.subarray(0, 4).equals(ZIP_MAGIC)) {
		const entries = unzipSync(new Uint8Array(body));
		const names = Object.keys(entries);
		decoding.push(`zip (${names.length} entries)`);
		return names.map((name) => `${name}\n${Buffer.from(entries[name]).toString('utf8')}`).join('\n');
	}
	return body.toString('utf8');
}

export function crawlGet(url: string, headers: Record<string, string>): Promise<CrawlResponse> {
	const started = performance.now();
	return new Promise((resolve, reject) => {
		const req = request(
			url,
			{ method: 'GET', agent, headers: { 'accept-encoding': 'gzip, br, deflate', ...headers } },
			(res) => {
				const chunks: Buffer[] = [];
				res.on('data', (chunk: Buffer) => chunks.push(chunk));
				res.on('error', reject);
				res.on('end', () => {
					try {
						const decoding: string[] = [];
						const body = decodeContent(Buffer.concat(chunks), res.headers['content-encoding'], decoding);
						const headerLines: string[] = [];
						for (let i = 0; i < res.rawHeaders.length; i += 2)
							headerLines.push(`${res.rawHeaders[i]}: ${res.rawHeaders[i + 1]}`);
						resolve({
							status: res.statusCode ?? 0,
							headerText: headerLines.join('\n'),
							bodyText: bodyAsText(body, decoding),
							decoding,
							milliseconds: performance.now() - started
						});
					} catch (error) {
						reject(new Error(`${url}: ${(error as Error).message}`));
					}
				});
			}
		);
		req.on('error', reject);
		req.end();
	});
}

/** Runs the tasks `limit` at a time, keeping their order in the results. */
export async function inPool<T, R>(items: readonly T[], limit: number, task: (item: T) => Promise<R>): Promise<R[]> {
	const results: R[] = new Array(items.length);
	let next = 0;
	const worker = async () => {
		while (next < items.length) {
			const index = next++;
			results[index] = await task(items[index]);
		}
	};
	await Promise.all(Array.from({ length: Math.min(limit, items.length) }, worker));
	return results;
}
