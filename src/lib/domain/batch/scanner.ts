/**
 * Keyboard-wedge barcode scanners type a code as fast keystrokes and end it with Enter. This tells
 * a scan from typing by the gap between keys (common practice: scanners send a key every few
 * milliseconds, people rarely faster than every 30 ms). Pure, so it can be tested without a DOM.
 */
export interface ScanOptions {
	/** Longest gap between two keys of one scan, ms. */
	maxGapMs?: number;
	/** Fewest characters a scan has. */
	minLength?: number;
}

export interface ScanDetector {
	/** Feed one key; returns the scanned code when Enter ends a scan, else null. */
	key(key: string, at: number): string | null;
	reset(): void;
}

export function createScanDetector(options: ScanOptions = {}): ScanDetector {
	const maxGap = options.maxGapMs ?? 35;
	const minLength = options.minLength ?? 4;
	let buffer = '';
	let last = -Infinity;
	return {
		key(key, at) {
			const gap = at - last;
			last = at;
			if (key === 'Enter') {
				const code = buffer;
				buffer = '';
				return code.length >= minLength && gap <= maxGap ? code : null;
			}
			if (key.length !== 1) return null;
			buffer = gap <= maxGap ? buffer + key : key;
			return null;
		},
		reset() {
			buffer = '';
			last = -Infinity;
		}
	};
}
