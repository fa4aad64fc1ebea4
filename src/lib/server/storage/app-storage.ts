import { getConfig } from '../config';
import { RegistryError } from '../registry/errors';
import { ObjectStorage } from './object-storage';

let storage: ObjectStorage | undefined;

/** The app's object storage for original uploads, from S3_* configuration (503 when it is not set). */
export function getObjectStorage(): ObjectStorage {
	if (storage) return storage;
	const config = getConfig();
	if (!config.S3_ACCESS_KEY_ID || !config.S3_SECRET_ACCESS_KEY) {
		throw new RegistryError(
			503,
			'storage-unavailable',
			'Object storage is not configured (S3_ACCESS_KEY_ID, S3_SECRET_ACCESS_KEY).'
		);
	}
	storage = new ObjectStorage({
		endpoint: config.S3_ENDPOINT,
		region: config.S3_REGION,
		bucket: config.S3_BUCKET,
		accessKeyId: config.S3_ACCESS_KEY_ID,
		secretAccessKey: config.S3_SECRET_ACCESS_KEY,
		forcePathStyle: config.S3_FORCE_PATH_STYLE
	});
	return storage;
}
