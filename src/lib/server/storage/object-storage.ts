import {
	CreateBucketCommand,
	DeleteObjectCommand,
	GetObjectCommand,
	HeadBucketCommand,
	HeadObjectCommand,
	ListObjectsV2Command,
	NotFound,
	PutObjectCommand,
	S3Client
} from '@aws-sdk/client-s3';
import { createHash } from 'node:crypto';

/**
 * Original upload files live in S3-compatible object storage, addressed by their sha256, so the same
 * file is stored once and a stored object can never be silently replaced by different bytes.
 */
export interface ObjectStorageOptions {
	/** e.g. http://127.0.0.1:4569 for the local fake server; omitted for AWS itself. */
	endpoint?: string;
	region: string;
	bucket: string;
	accessKeyId: string;
	secretAccessKey: string;
	/** Path-style URLs (bucket in the path), which most S3-compatible servers need. */
	forcePathStyle: boolean;
}

export interface StoredObject {
	key: string;
	sha256: string;
	size: number;
}

/** Where bytes live in the store: `<prefix>/sha256/<hex of their SHA-256>`. */
export function contentAddress(prefix: string, body: Uint8Array): StoredObject {
	const sha256 = createHash('sha256').update(body).digest('hex');
	return { key: `${prefix}/sha256/${sha256}`, sha256, size: body.byteLength };
}

export class ObjectStorage {
	private readonly client: S3Client;
	readonly bucket: string;

	constructor(options: ObjectStorageOptions) {
		this.bucket = options.bucket;
		this.client = new S3Client({
			endpoint: options.endpoint,
			region: options.region,
			forcePathStyle: options.forcePathStyle,
			credentials: { accessKeyId: options.accessKeyId, secretAccessKey: options.secretAccessKey }
		});
	}

	/** Creates the bucket when it is missing (the local fake server starts empty). */
	async ensureBucket(): Promise<void> {
		try {
			await this.client.send(new HeadBucketCommand({ Bucket: this.bucket }));
		} catch {
			await this.client.send(new CreateBucketCommand({ Bucket: this.bucket }));
		}
	}

	/** Stores bytes under `<prefix>/sha256/<hex>`; storing the same bytes again is a no-op. */
	async putContentAddressed(prefix: string, body: Uint8Array, contentType: string): Promise<StoredObject> {
		return this.putAt(contentAddress(prefix, body), body, contentType);
	}

	/** Stores bytes at an address made by `contentAddress` (for callers that need the key first). */
	async putAt(address: StoredObject, body: Uint8Array, contentType: string): Promise<StoredObject> {
		if (!(await this.exists(address.key))) {
			await this.client.send(
				new PutObjectCommand({
					Bucket: this.bucket,
					Key: address.key,
					Body: body,
					ContentType: contentType,
					Metadata: { sha256: address.sha256 }
				})
			);
		}
		return address;
	}

	async get(key: string): Promise<Uint8Array> {
		const response = await this.client.send(new GetObjectCommand({ Bucket: this.bucket, Key: key }));
		if (!response.Body) throw new Error(`object ${key} has no body`);
		return response.Body.transformToByteArray();
	}

	async exists(key: string): Promise<boolean> {
		try {
			await this.client.send(new HeadObjectCommand({ Bucket: this.bucket, Key: key }));
			return true;
		} catch (error) {
			if (error instanceof NotFound || (error as { name?: string }).name === 'NotFound') return false;
			throw error;
		}
	}

	/** Every object under a prefix with when it was written, page by page. */
	async *list(prefix: string): AsyncGenerator<{ key: string; lastModified: Date }> {
		let token: string | undefined;
		do {
			const page = await this.client.send(
				new ListObjectsV2Command({ Bucket: this.bucket, Prefix: prefix, ContinuationToken: token })
			);
			for (const item of page.Contents ?? []) {
				if (item.Key && item.LastModified) yield { key: item.Key, lastModified: item.LastModified };
			}
			token = page.IsTruncated ? page.NextContinuationToken : undefined;
		} while (token);
	}

	async delete(key: string): Promise<void> {
		await this.client.send(new DeleteObjectCommand({ Bucket: this.bucket, Key: key }));
	}

	destroy(): void {
		this.client.destroy();
	}
}
