import { mkdirSync } from 'node:fs';
import type { AddressInfo } from 'node:net';
import type { ObjectStorageOptions } from './object-storage';

/**
 * A local S3-compatible server (s3rver) on 127.0.0.1 for `npm start` and the tests, so uploads go
 * through the real AWS SDK path. Credentials are s3rver's fixed development pair.
 */
export interface LocalObjectServer {
	options: ObjectStorageOptions;
	close: () => Promise<void>;
}

export const LOCAL_S3_CREDENTIALS = { accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER' } as const;

export async function startLocalObjectServer(directory: string, bucket: string, port = 0): Promise<LocalObjectServer> {
	mkdirSync(directory, { recursive: true });
	// s3rver is a development dependency: production points S3_ENDPOINT at a real service.
	const { default: S3rver } = await import('s3rver');
	const server = new S3rver({
		address: '127.0.0.1',
		port,
		directory,
		silent: true,
		configureBuckets: [{ name: bucket, configs: [] }]
	});
	const address = (await server.run()) as AddressInfo;
	return {
		options: {
			endpoint: `http://127.0.0.1:${address.port}`,
			region: 'us-east-1',
			bucket,
			forcePathStyle: true,
			...LOCAL_S3_CREDENTIALS
		},
		close: () => server.close()
	};
}
