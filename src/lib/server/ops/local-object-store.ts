import { startLocalObjectServer } from '../storage/local-object-server';
import { ObjectStorage } from '../storage/object-storage';

export interface LocalObjectStore {
	/** S3_* variables that point the app at the local server. */
	env: Record<string, string>;
	close: () => Promise<void>;
}

/**
 * Starts the local fake S3 server (s3rver on 127.0.0.1) in `directory`, creates the bucket, and returns
 * the environment for the app, so uploads go through the real AWS SDK path.
 */
export async function startLocalObjectStore(
	directory: string,
	bucket = 'candlebook-uploads'
): Promise<LocalObjectStore> {
	const server = await startLocalObjectServer(directory, bucket);
	const storage = new ObjectStorage(server.options);
	await storage.ensureBucket();
	storage.destroy();
	const { options } = server;
	return {
		env: {
			S3_ENDPOINT: options.endpoint!,
			S3_REGION: options.region,
			S3_BUCKET: options.bucket,
			S3_ACCESS_KEY_ID: options.accessKeyId,
			S3_SECRET_ACCESS_KEY: options.secretAccessKey,
			S3_FORCE_PATH_STYLE: 'true'
		},
		close: server.close
	};
}

/** Whether the environment already names an object store of its own. */
export const hasOwnObjectStore = (env: NodeJS.ProcessEnv): boolean => !!(env.S3_ACCESS_KEY_ID || env.S3_ENDPOINT);
