/**
 * The statuses in which an executed batch record still takes entries, verifications, files and
 * cycle evidence (21 CFR 211.188: the record is completed while the batch is made; once released
 * or rejected it is closed). One list for every writer and page, so they never disagree.
 */
export const OPEN_BATCH_STATUSES = ['issued', 'in-progress', 'awaiting-review'] as const;

export type OpenBatchStatus = (typeof OPEN_BATCH_STATUSES)[number];

/** Whether a batch in this status still takes records. */
export function isBatchOpen(status: string): status is OpenBatchStatus {
	return (OPEN_BATCH_STATUSES as readonly string[]).includes(status);
}
