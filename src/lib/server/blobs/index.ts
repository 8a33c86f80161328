import { join } from 'node:path';
import { getConfig } from '../config';
import { localBlobStore, type BlobStore } from './store';
import { s3BlobStore } from './s3';

let store: BlobStore | undefined;

/** This process's blob store: S3 when RIMEBOOK_S3_BUCKET is set, else RIMEBOOK_DATA_DIR/blobs. */
export function blobStore(): BlobStore {
	if (!store) {
		const env = getConfig();
		store = env.RIMEBOOK_S3_BUCKET
			? s3BlobStore({ bucket: env.RIMEBOOK_S3_BUCKET, endpoint: env.RIMEBOOK_S3_ENDPOINT, region: env.RIMEBOOK_S3_REGION, accessKeyId: env.RIMEBOOK_S3_ACCESS_KEY_ID, secretAccessKey: env.RIMEBOOK_S3_SECRET_ACCESS_KEY })
			: localBlobStore(join(getConfig().RIMEBOOK_DATA_DIR, 'blobs'));
	}
	return store;
}

export type { BlobStore };
