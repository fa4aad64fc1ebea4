import type { EntityManager } from '@mikro-orm/postgresql';

/**
 * Throttling of sign-in and password-reset attempts: a sliding window of attempts per account (the
 * address typed, known or not) and per client address. Attempts live in the database
 * (`app_throttle_attempt`), so every app instance counts together.
 */
export interface ThrottleLimits {
	perAccount: number;
	perAddress: number;
	windowMs: number;
}

const MINUTE_IN_MS = 60_000;
export const SIGN_IN_LIMITS: ThrottleLimits = { perAccount: 5, perAddress: 30, windowMs: 15 * MINUTE_IN_MS };
export const PASSWORD_RESET_LIMITS: ThrottleLimits = { perAccount: 3, perAddress: 10, windowMs: 60 * MINUTE_IN_MS };

/** An attempt that was counted; a successful one is forgotten again with `succeeded`. */
export interface CountedAttempt {
	accountKey: string;
	clientAttemptId: string;
}

export type ThrottleVerdict =
	{ allowed: true; attempt: CountedAttempt } | { allowed: false; retryAfterSeconds: number };

// The first half of pg_advisory_xact_lock(int, int): keeps these locks apart from anyone else's.
const LOCK_NAMESPACE = 0x43424b54;

export class AttemptThrottle {
	constructor(
		readonly name: string,
		readonly limits: ThrottleLimits,
		private readonly now: () => number = Date.now
	) {}

	keysFor(account: string, clientAddress: string) {
		return {
			account: `${this.name}:account:${account.trim().toLowerCase()}`,
			client: `${this.name}:client:${clientAddress}`
		};
	}

	/**
	 * Checks both counts and, when both are under their limits, records the attempt, in one transaction
	 * that holds a lock on each key: parallel attempts queue here instead of all passing the check
	 * before any of them is recorded.
	 */
	take(em: EntityManager, account: string, clientAddress: string): Promise<ThrottleVerdict> {
		const keys = this.keysFor(account, clientAddress);
		const now = this.now();
		const cutoff = new Date(now - this.limits.windowMs);
		return em.transactional(async (tx) => {
			// Always in the same order, so two attempts never wait for each other's second lock.
			for (const key of [keys.account, keys.client].sort()) {
				await tx.execute('select pg_advisory_xact_lock(?, hashtext(?))', [LOCK_NAMESPACE, key]);
			}
			await tx.execute('delete from app_throttle_attempt where key in (?, ?) and attempted_at <= ?', [
				keys.account,
				keys.client,
				cutoff
			]);
			const waits = [
				await this.waitFor(tx, keys.account, this.limits.perAccount, cutoff, now),
				await this.waitFor(tx, keys.client, this.limits.perAddress, cutoff, now)
			];
			const wait = Math.max(...waits);
			if (wait > 0) return { allowed: false as const, retryAfterSeconds: Math.ceil(wait / 1000) };
			const at = new Date(now);
			const rows: { id: string; key: string }[] = await tx.execute(
				'insert into app_throttle_attempt (key, attempted_at) values (?, ?), (?, ?) returning id, key',
				[keys.account, at, keys.client, at]
			);
			const clientRow = rows.find((row) => row.key === keys.client)!;
			return { allowed: true as const, attempt: { accountKey: keys.account, clientAttemptId: String(clientRow.id) } };
		});
	}

	/** A success clears the account's attempts and takes this one back from the client's count. */
	async succeeded(em: EntityManager, attempt: CountedAttempt): Promise<void> {
		await em.execute('delete from app_throttle_attempt where key = ? or id = ?', [
			attempt.accountKey,
			attempt.clientAttemptId
		]);
	}

	/** Milliseconds until one more attempt is allowed: 0 while fewer than `limit` lie in the window. */
	private async waitFor(tx: EntityManager, key: string, limit: number, cutoff: Date, now: number): Promise<number> {
		const rows: { attempted_at: Date }[] = await tx.execute(
			'select attempted_at from app_throttle_attempt where key = ? and attempted_at > ? order by attempted_at desc offset ? limit 1',
			[key, cutoff, limit - 1]
		);
		if (rows.length === 0) return 0;
		return Math.max(1, new Date(rows[0].attempted_at).getTime() + this.limits.windowMs - now);
	}
}

export const signInThrottle = new AttemptThrottle('sign-in', SIGN_IN_LIMITS);
export const passwordResetThrottle = new AttemptThrottle('password-reset', PASSWORD_RESET_LIMITS);

export function describeWait(seconds: number): string {
	const minutes = Math.ceil(seconds / 60);
	return minutes <= 1 ? 'a minute' : `${minutes} minutes`;
}
