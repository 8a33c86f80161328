import { describe, expect, it } from 'vitest';
import { createScanDetector } from '$lib/domain/batch/scanner';

/** Feeds a code as keystrokes `gapMs` apart, then Enter; returns what the detector reports. */
function feed(detector: ReturnType<typeof createScanDetector>, code: string, gapMs: number, start = 1000): string | null {
	let at = start;
	for (const ch of code) {
		expect(detector.key(ch, at)).toBeNull();
		at += gapMs;
	}
	return detector.key('Enter', at);
}

// Keyboard-wedge scanners send a code as keystrokes a few ms apart ending in Enter (common practice;
// USB HID keyboard emulation); people type far slower (the 35 ms default gap is our choice, common practice).
describe('telling a scan from typing (scanner.ts)', () => {
	it('reports a fast burst ending in Enter as a scanned code', () => {
		expect(feed(createScanDetector(), 'T-SUC-OK', 8)).toBe('T-SUC-OK');
	});

	it('does not report typing at human speed', () => {
		expect(feed(createScanDetector(), 'T-SUC-OK', 120)).toBeNull();
	});

	it('a pause restarts the buffer: only the burst after it is the code', () => {
		const d = createScanDetector();
		expect(d.key('x', 0)).toBeNull();
		expect(d.key('y', 40)).toBeNull();
		expect(feed(d, 'LYO-01', 5, 500)).toBe('LYO-01');
	});

	it('ignores codes shorter than the minimum and non-character keys; honours its options', () => {
		expect(feed(createScanDetector(), 'AB', 5)).toBeNull();
		const d = createScanDetector({ maxGapMs: 60, minLength: 2 });
		expect(d.key('Shift', 0)).toBeNull();
		expect(feed(d, 'AB', 50, 10)).toBe('AB');
		d.key('Q', 1000);
		d.reset();
		expect(d.key('Enter', 1001)).toBeNull();
	});
});
