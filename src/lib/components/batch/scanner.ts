/** The scan detector is pure domain logic (tested in tests/unit/batch); re-exported for the step page. */
export { createScanDetector, type ScanDetector, type ScanOptions } from '$lib/domain/batch/scanner';
