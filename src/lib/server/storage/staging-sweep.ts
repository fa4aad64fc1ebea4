import type { ObjectStorage } from './object-storage';

/**
 * The upload wizard stages a file between its steps and removes it at commit; a file whose wizard was
 * abandoned would stay for ever. The sweep removes staged files written before a cutoff (a day ago by
 * default): long enough for anyone still working through the steps.
 */
export const STAGING_PREFIX = 'calibrator-staging/';
export const STAGED_FILE_LIFETIME_MS = 24 * 60 * 60 * 1000;

export async function sweepStagedFiles(
	storage: ObjectStorage,
	cutoff: Date = new Date(Date.now() - STAGED_FILE_LIFETIME_MS)
): Promise<{ removed: number; kept: number }> {
	let removed = 0;
	let kept = 0;
	for await (const object of storage.list(STAGING_PREFIX)) {
		if (object.lastModified < cutoff) {
			await storage.delete(object.key);
			removed += 1;
		} else {
			kept += 1;
		}
	}
	return { removed, kept };
}
