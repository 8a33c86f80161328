import { and, asc, eq } from 'drizzle-orm';
import type { Executor } from '../db/client';
import { signature, type Signature } from '../db/schema';
import { hashContent } from './ceremony';

/** Signatures of one record, oldest first, for its manifestation (11.50). */
export async function listSignatures(db: Executor, entityType: string, entityId: string): Promise<Signature[]> {
	return db
		.select()
		.from(signature)
		.where(and(eq(signature.entityType, entityType), eq(signature.entityId, entityId)))
		.orderBy(asc(signature.at));
}

/** Whether a record's content is still the content that was signed (11.70; 11.10(a): detect altered records). */
export function isSignatureBound(sig: Pick<Signature, 'contentHash'>, content: unknown): boolean {
	return hashContent(content) === sig.contentHash;
}
