import { getConfig } from '../config';
import { DEFAULT_TABLE_LIMITS } from '../../calibration/index';
import type { UploadLimits } from '../registry/calibrator-sets';
import { RegistryError } from '../registry/errors';
import { getObjectStorage } from '../storage/app-storage';
import { contentAddress } from '../storage/object-storage';
import { STAGING_PREFIX } from '../storage/staging-sweep';

/**
 * The upload wizard keeps the file between its steps in object storage, addressed by the uploader and
 * the bytes' SHA-256: the steps pass only the hash, the bytes never travel back through the browser,
 * and nobody can commit a file another person staged. Nothing in the registry changes until commit;
 * files of abandoned wizards are swept after a day (staging-sweep.ts).
 */
const SHA256 = /^[0-9a-f]{64}$/;

const prefixFor = (userId: string) => `${STAGING_PREFIX}${userId}`;

/** The same limits the upload API applies. */
export function uploadLimits(): UploadLimits {
	const config = getConfig();
	return {
		...DEFAULT_TABLE_LIMITS,
		maxBytes: config.CANDLEBOOK_MAX_UPLOAD_BYTES,
		maxRows: config.CANDLEBOOK_MAX_UPLOAD_ROWS,
		maxColumns: 200,
		maxCellLength: 500
	};
}

export async function stageUpload(userId: string, bytes: Uint8Array, mediaType: string): Promise<string> {
	const stored = await getObjectStorage().putContentAddressed(prefixFor(userId), bytes, mediaType);
	return stored.sha256;
}

export async function readStagedUpload(userId: string, sha256: string): Promise<Uint8Array> {
	const missing = () =>
		new RegistryError(404, 'not-found', 'The uploaded file is no longer staged; choose the file again.');
	if (!SHA256.test(sha256)) throw missing();
	const storage = getObjectStorage();
	const key = `${prefixFor(userId)}/sha256/${sha256}`;
	if (!(await storage.exists(key))) throw missing();
	const bytes = await storage.get(key);
	// Content addressing makes a swapped object detectable.
	if (contentAddress(prefixFor(userId), bytes).sha256 !== sha256) throw missing();
	return bytes;
}

export async function discardStagedUpload(userId: string, sha256: string): Promise<void> {
	if (!SHA256.test(sha256)) return;
	await getObjectStorage()
		.delete(`${prefixFor(userId)}/sha256/${sha256}`)
		.catch(() => undefined);
}

/** text/csv or text/tab-separated-values from the file's name and declared type. */
export function uploadMediaType(fileName: string, declared: string): string {
	const lower = fileName.toLowerCase();
	if (lower.endsWith('.tsv') || lower.endsWith('.tab') || declared === 'text/tab-separated-values')
		return 'text/tab-separated-values';
	if (lower.endsWith('.csv') || declared === 'text/csv') return 'text/csv';
	return declared || 'application/octet-stream';
}
