/**
 * Built deposit archives kept in memory by content address (archiveKey of the caller's listing), so a
 * request rebuilds the archive only when something in it changed. The key changes with every change,
 * so an entry never goes stale; older entries simply age out. Requests for an archive that is being
 * built wait for that one build instead of starting their own.
 */
export class ArchiveCache {
	readonly #entries = new Map<string, Uint8Array>();
	readonly #building = new Map<string, Promise<Uint8Array>>();
	#bytes = 0;
	/** Archives built, and answers served without a build, since the process started. */
	builds = 0;
	reuses = 0;

	constructor(
		/** An archive larger than this is served but not kept. */
		readonly maxBytes = 256 * 1024 * 1024,
		readonly maxEntries = 4
	) {}

	async bytes(key: string, build: () => ReadableStream<Uint8Array>): Promise<Uint8Array> {
		const cached = this.#entries.get(key);
		if (cached) {
			this.reuses++;
			// Most recently used last: eviction takes the first.
			this.#entries.delete(key);
			this.#entries.set(key, cached);
			return cached;
		}
		const pending = this.#building.get(key);
		if (pending) {
			this.reuses++;
			return pending;
		}
		this.builds++;
		const building = new Response(build()).arrayBuffer().then((buffer) => new Uint8Array(buffer));
		this.#building.set(key, building);
		try {
			const bytes = await building;
			this.#keep(key, bytes);
			return bytes;
		} finally {
			this.#building.delete(key);
		}
	}

	#keep(key: string, bytes: Uint8Array) {
		if (bytes.byteLength > this.maxBytes) return;
		this.#entries.set(key, bytes);
		this.#bytes += bytes.byteLength;
		for (const [oldest, held] of this.#entries) {
			if (this.#bytes <= this.maxBytes && this.#entries.size <= this.maxEntries) break;
			this.#entries.delete(oldest);
			this.#bytes -= held.byteLength;
		}
	}
}

/** The app's one archive cache (per process). */
export const archiveCache = new ArchiveCache();
