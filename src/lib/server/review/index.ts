export { ReviewError, isReviewError, type ReviewErrorCode } from './errors';
export { loadReviewRecords, reviewItemsOf, dispositionFactsOf, itemViewsOf, dispositionSignature, type ReviewRecords, type ReviewItemView } from './records';
export { markReviewed, type MarkReviewedRequest } from './marks';
export { disposeBatch, judgeDisposition, dispositionSignatureContent, type DispositionRequest, type DispositionResult } from './disposition';
export { listReviewQueue, type ReviewQueueEntry } from './queue';
export { buildReviewView, type ReviewView } from './view';
