/**
 * Fixed-window request counting per client, advertised with the RateLimit-Policy and RateLimit fields
 * of draft-ietf-httpapi-ratelimit-headers-10 (structured-field items: policy `"name";q=quota;w=window`,
 * state `"name";r=remaining;t=seconds-to-reset`).
 */
export interface RateLimitPolicy {
	/** The policy's name in both fields. */
	name: string;
	limit: number;
	windowSeconds: number;
}

export interface RateLimitDecision {
	allowed: boolean;
	remaining: number;
	/** Whole seconds until the client's window starts afresh (at least 1). */
	resetSeconds: number;
}

interface Window {
	startedAt: number;
	count: number;
}

export class FixedWindowLimiter {
	readonly policy: RateLimitPolicy;
	readonly #now: () => number;
	readonly #windows = new Map<string, Window>();
	#nextSweep: number;

	constructor(policy: RateLimitPolicy, now: () => number = Date.now) {
		this.policy = policy;
		this.#now = now;
		this.#nextSweep = now() + policy.windowSeconds * 1000;
	}

	/** Counts one request from `client` and says whether it is within the quota. */
	take(client: string): RateLimitDecision {
		const now = this.#now();
		const windowMs = this.policy.windowSeconds * 1000;
		if (now >= this.#nextSweep) this.#sweep(now, windowMs);
		let window = this.#windows.get(client);
		if (!window || now - window.startedAt >= windowMs) {
			window = { startedAt: now, count: 0 };
			this.#windows.set(client, window);
		}
		window.count += 1;
		const allowed = window.count <= this.policy.limit;
		return {
			allowed,
			remaining: Math.max(0, this.policy.limit - window.count),
			resetSeconds: Math.max(1, Math.ceil((window.startedAt + windowMs - now) / 1000))
		};
	}

	/** Clients being counted now (expired windows are dropped once per window length). */
	get trackedClients(): number {
		return this.#windows.size;
	}

	#sweep(now: number, windowMs: number): void {
		for (const [client, window] of this.#windows) {
			if (now - window.startedAt >= windowMs) this.#windows.delete(client);
		}
		this.#nextSweep = now + windowMs;
	}
}

export function rateLimitHeaders(policy: RateLimitPolicy, decision: RateLimitDecision): Record<string, string> {
	return {
		'ratelimit-policy': `"${policy.name}";q=${policy.limit};w=${policy.windowSeconds}`,
		ratelimit: `"${policy.name}";r=${decision.remaining};t=${decision.resetSeconds}`
	};
}
