import { LRUCache } from 'lru-cache';

/** One frozen answer as SvelteKit first sent it: status 200, its headers and its exact body bytes. */
export interface StoredAnswer {
	headers: ReadonlyArray<readonly [name: string, value: string]>;
	body: Buffer;
	etag: string | null;
}

type HeaderValue = string | string[] | number | undefined;

function cacheDirectives(value: HeaderValue): Set<string> {
	const text = Array.isArray(value) ? value.join(',') : String(value ?? '');
	return new Set(
		text
			.split(',')
			.map((directive) => directive.split('=')[0].trim().toLowerCase())
			.filter(Boolean)
	);
}

/**
 * Whether an answer may be kept and replayed to anyone. The app alone decides what is public: only a
 * 200 that it marked `public` and `immutable`, that sets no cookie and does not vary by request.
 */
export function isStorable(status: number, headers: Record<string, HeaderValue>): boolean {
	if (status !== 200) return false;
	const directives = cacheDirectives(headers['cache-control']);
	if (!directives.has('public') || !directives.has('immutable')) return false;
	if (directives.has('private') || directives.has('no-store') || directives.has('no-cache')) return false;
	if (headers['set-cookie'] !== undefined) return false;
	if (headers['vary'] !== undefined && String(headers['vary']).trim() !== '') return false;
	return headers['content-encoding'] === undefined;
}

/** RFC 9110 §13.1.2 weak comparison, as the app's own pinned-version route applies it. */
export function matchesIfNoneMatch(ifNoneMatch: string | undefined, etag: string | null): boolean {
	if (!ifNoneMatch || !etag) return false;
	const strip = (tag: string) => tag.trim().replace(/^W\//, '');
	const wanted = strip(etag);
	return ifNoneMatch.split(',').some((tag) => strip(tag) === wanted || tag.trim() === '*');
}

/** Per-entry bookkeeping beyond the body: header bytes plus a little for the key and object. */
const ENTRY_OVERHEAD = 256;

export function answerSize(key: string, answer: StoredAnswer): number {
	let size = ENTRY_OVERHEAD + key.length + answer.body.length;
	for (const [name, value] of answer.headers) size += name.length + value.length;
	return size;
}

export interface ImmutableCacheOptions {
	/** Upper bound on the memory the entries take, in bytes. */
	maxBytes: number;
	/** Largest single answer kept (defaults to an eighth of maxBytes). */
	maxEntryBytes?: number;
}

/** Frozen public answers by request target (path and query), least recently used dropped first. */
export class ImmutableCache {
	readonly maxEntryBytes: number;
	readonly #entries: LRUCache<string, StoredAnswer> | null;

	constructor(options: ImmutableCacheOptions) {
		this.maxEntryBytes = Math.min(options.maxEntryBytes ?? Math.floor(options.maxBytes / 8), options.maxBytes);
		this.#entries =
			options.maxBytes > 0
				? new LRUCache<string, StoredAnswer>({
						maxSize: options.maxBytes,
						maxEntrySize: this.maxEntryBytes,
						sizeCalculation: (answer, key) => answerSize(key, answer)
					})
				: null;
	}

	get enabled(): boolean {
		return this.#entries !== null;
	}

	get(target: string): StoredAnswer | undefined {
		return this.#entries?.get(target);
	}

	/** Keeps the answer unless it alone is larger than an entry may be. */
	set(target: string, answer: StoredAnswer): boolean {
		if (!this.#entries || answerSize(target, answer) > this.maxEntryBytes) return false;
		this.#entries.set(target, answer);
		return this.#entries.has(target);
	}

	get size(): number {
		return this.#entries?.size ?? 0;
	}

	get bytes(): number {
		return this.#entries?.calculatedSize ?? 0;
	}
}
