/**
 * Sign-in throttling: a sliding window of failed attempts per account and per client address. The
 * counters live in this process's memory, so each app instance counts on its own.
 */
export interface ThrottleLimits {
	perAccount: number;
	perAddress: number;
	windowMs: number;
}

export const SIGN_IN_LIMITS: ThrottleLimits = { perAccount: 5, perAddress: 30, windowMs: 15 * 60_000 };

export type ThrottleVerdict = { allowed: true } | { allowed: false; retryAfterSeconds: number };

export class SignInThrottle {
	private readonly failures = new Map<string, number[]>();

	constructor(
		private readonly limits: ThrottleLimits = SIGN_IN_LIMITS,
		private readonly now: () => number = Date.now
	) {}

	check(account: string, address: string): ThrottleVerdict {
		const waits = [
			this.waitFor(`account:${account.toLowerCase()}`, this.limits.perAccount),
			this.waitFor(`address:${address}`, this.limits.perAddress)
		];
		const wait = Math.max(...waits);
		return wait > 0 ? { allowed: false, retryAfterSeconds: Math.ceil(wait / 1000) } : { allowed: true };
	}

	recordFailure(account: string, address: string): void {
		for (const key of [`account:${account.toLowerCase()}`, `address:${address}`]) {
			const recent = this.recent(key);
			recent.push(this.now());
			this.failures.set(key, recent);
		}
	}

	/** A successful sign-in clears the account's failures (not the address's). */
	recordSuccess(account: string): void {
		this.failures.delete(`account:${account.toLowerCase()}`);
	}

	private recent(key: string): number[] {
		const cutoff = this.now() - this.limits.windowMs;
		const kept = (this.failures.get(key) ?? []).filter((at) => at > cutoff);
		if (kept.length === 0) this.failures.delete(key);
		return kept;
	}

	private waitFor(key: string, limit: number): number {
		const recent = this.recent(key);
		if (recent.length < limit) return 0;
		return recent[recent.length - limit] + this.limits.windowMs - this.now();
	}
}

/** The process-wide throttle used by the sign-in form. */
export const signInThrottle = new SignInThrottle();

export function describeWait(seconds: number): string {
	const minutes = Math.ceil(seconds / 60);
	return minutes <= 1 ? 'a minute' : `${minutes} minutes`;
}
