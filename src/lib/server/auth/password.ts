import { hash, verify } from '@node-rs/argon2';
import { getConfig } from '../config';

const ARGON2ID = 2;

function options() {
	const config = getConfig();
	return {
		algorithm: ARGON2ID,
		memoryCost: config.CANDLEBOOK_ARGON2_MEMORY_KIB,
		timeCost: config.CANDLEBOOK_ARGON2_PASSES,
		parallelism: 1,
		outputLen: 32
	} as const;
}

export const PASSWORD_MIN_LENGTH = 12;
export const PASSWORD_MAX_LENGTH = 256;

export function hashPassword(password: string): Promise<string> {
	return hash(password, options());
}

let decoy: Promise<string> | undefined;

/**
 * Verifies a password against a stored hash. Without a hash (unknown or not yet activated account) it
 * still spends the time of one verification, so timing does not tell whether an account exists.
 */
export async function verifyPassword(storedHash: string | null | undefined, password: string): Promise<boolean> {
	if (!storedHash) {
		decoy ??= hashPassword('candlebook decoy password');
		await verify(await decoy, password).catch(() => false);
		return false;
	}
	return verify(storedHash, password).catch(() => false);
}
