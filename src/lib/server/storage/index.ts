/**
 * The one storage module: every uploaded byte goes to S3-compatible object storage through
 * here, as in a hosted deployment. Development and tests point it at the local fake S3
 * (fixtures/s3/server.ts). Objects are never served from a bucket URL: the app streams them
 * through /files/[id] after its role check.
 *
 * Free of `$env` so tests and jobs can build a client from their own settings.
 */
import {
	DeleteObjectCommand,
	GetObjectCommand,
	HeadObjectCommand,
	ListObjectsV2Command,
	PutObjectCommand,
	S3Client
} from '@aws-sdk/client-s3';

export interface StorageConfig {
	endpoint?: string;
	bucket: string;
	region: string;
	accessKeyId: string;
	secretAccessKey: string;
}

export interface StoredObject {
	body: ReadableStream<Uint8Array>;
	contentType: string;
	length: number | undefined;
}

export interface Storage {
	readonly bucket: string;
	put(key: string, bytes: Uint8Array, contentType: string): Promise<void>;
	/** The object, or null when there is no such key. */
	get(key: string): Promise<StoredObject | null>;
	getBytes(key: string): Promise<Uint8Array | null>;
	exists(key: string): Promise<boolean>;
	remove(key: string): Promise<void>;
	list(prefix?: string): Promise<string[]>;
}

/** Read S3_* settings from an environment object; throws a clear message when one is missing. */
export function storageConfigFrom(env: Record<string, string | undefined>): StorageConfig {
	const missing = ['S3_BUCKET', 'S3_REGION', 'S3_ACCESS_KEY_ID', 'S3_SECRET_ACCESS_KEY'].filter((k) => !env[k]);
	if (missing.length) {
		throw new Error(`object storage is not configured: set ${missing.join(', ')} (see .env.example)`);
	}
	return {
		endpoint: env.S3_ENDPOINT || undefined,
		bucket: env.S3_BUCKET!,
		region: env.S3_REGION!,
		accessKeyId: env.S3_ACCESS_KEY_ID!,
		secretAccessKey: env.S3_SECRET_ACCESS_KEY!
	};
}

function isNotFound(err: unknown) {
	const e = err as { name?: string; $metadata?: { httpStatusCode?: number } };
	return e?.name === 'NoSuchKey' || e?.name === 'NotFound' || e?.$metadata?.httpStatusCode === 404;
}

/** An S3 client bound to one bucket. Path-style addressing, so any S3-compatible host works. */
export function createStorage(config: StorageConfig): Storage {
	const client = new S3Client({
		endpoint: config.endpoint,
		region: config.region,
		forcePathStyle: true,
		credentials: { accessKeyId: config.accessKeyId, secretAccessKey: config.secretAccessKey }
	});
	const Bucket = config.bucket;
	return {
		bucket: Bucket,
		async put(key, bytes, contentType) {
			await client.send(
				new PutObjectCommand({
					Bucket,
					Key: key,
					Body: bytes,
					ContentType: contentType,
					ContentLength: bytes.byteLength
				})
			);
		},
		async get(key) {
			try {
				const out = await client.send(new GetObjectCommand({ Bucket, Key: key }));
				if (!out.Body) return null;
				return {
					body: out.Body.transformToWebStream() as ReadableStream<Uint8Array>,
					contentType: out.ContentType ?? 'application/octet-stream',
					length: out.ContentLength
				};
			} catch (err) {
				if (isNotFound(err)) return null;
				throw err;
			}
		},
		async getBytes(key) {
			try {
				const out = await client.send(new GetObjectCommand({ Bucket, Key: key }));
				return out.Body ? await out.Body.transformToByteArray() : null;
			} catch (err) {
				if (isNotFound(err)) return null;
				throw err;
			}
		},
		async exists(key) {
			try {
				await client.send(new HeadObjectCommand({ Bucket, Key: key }));
				return true;
			} catch (err) {
				if (isNotFound(err)) return false;
				throw err;
			}
		},
		async remove(key) {
			await client.send(new DeleteObjectCommand({ Bucket, Key: key }));
		},
		async list(prefix) {
			const keys: string[] = [];
			let token: string | undefined;
			do {
				const out = await client.send(new ListObjectsV2Command({ Bucket, Prefix: prefix, ContinuationToken: token }));
				for (const o of out.Contents ?? []) if (o.Key) keys.push(o.Key);
				token = out.IsTruncated ? out.NextContinuationToken : undefined;
			} while (token);
			return keys;
		}
	};
}
