import { GetObjectCommand, PutObjectCommand, S3Client, HeadObjectCommand } from '@aws-sdk/client-s3';
import { checkName, type BlobStore } from './store';

export interface S3Options {
	bucket: string;
	endpoint?: string;
	region: string;
	accessKeyId?: string;
	secretAccessKey?: string;
	prefix?: string;
}

/**
 * An S3-compatible bucket (toolchain.md: path-style addressing and checksums only when required
 * make it work with local S3 fakes as with the real service). Keys are <prefix><sha256>.
 */
export function s3BlobStore(options: S3Options): BlobStore {
	const client = new S3Client({
		region: options.region,
		endpoint: options.endpoint,
		forcePathStyle: true,
		requestChecksumCalculation: 'WHEN_REQUIRED',
		responseChecksumValidation: 'WHEN_REQUIRED',
		credentials: options.accessKeyId && options.secretAccessKey ? { accessKeyId: options.accessKeyId, secretAccessKey: options.secretAccessKey } : undefined
	});
	const key = (sha: string) => `${options.prefix ?? 'blobs/'}${sha}`;
	return {
		kind: 's3',
		async put(sha256, bytes, contentType) {
			checkName(sha256);
			try {
				await client.send(new HeadObjectCommand({ Bucket: options.bucket, Key: key(sha256) }));
				return;
			} catch {
				/* not there yet */
			}
			await client.send(new PutObjectCommand({ Bucket: options.bucket, Key: key(sha256), Body: bytes, ContentType: contentType, Metadata: { sha256 } }));
		},
		async get(sha256) {
			checkName(sha256);
			try {
				const out = await client.send(new GetObjectCommand({ Bucket: options.bucket, Key: key(sha256) }));
				return out.Body ? new Uint8Array(await out.Body.transformToByteArray()) : null;
			} catch {
				return null;
			}
		}
	};
}
