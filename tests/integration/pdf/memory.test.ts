import { describe, expect, test } from 'vitest';
import { setFlagsFromString } from 'node:v8';
import { runInNewContext } from 'node:vm';
import { PDFDocument } from 'pdf-lib';
import { embedFonts, fontRuns } from '$lib/server/pdf/fonts';

// A garbage collection on demand (node's --expose-gc, turned on for this process only).
setFlagsFromString('--expose-gc');
const gc = runInNewContext('gc') as () => void;

/** One small record-like render; returns weak references to what it made. */
async function renderOne(): Promise<WeakRef<object>[]> {
	const doc = await PDFDocument.create();
	const fonts = await embedFonts(doc);
	// What every text line of a record does: split by the font that has each character.
	expect(fontRuns('Fill volume ≤ 4.6 mL (invented)', fonts.regular, fonts.fallbackRegular).length).toBeGreaterThan(0);
	doc.addPage().drawText('Rimebook', { font: fonts.regular, size: 10, x: 40, y: 700 });
	await doc.save();
	return [new WeakRef(doc), new WeakRef(fonts.regular)];
}

describe('PDF fonts hold no document after it is rendered', () => {
	// A server renders PDFs for as long as it runs; anything a render leaves reachable grows the
	// heap without bound (the hostile-input soak ran out of heap this way).
	test('a rendered document and its fonts can be collected once nothing else holds them', async () => {
		const refs: WeakRef<object>[] = [];
		for (let i = 0; i < 3; i++) refs.push(...(await renderOne()));
		// Collection is asynchronous to the code that dropped the last reference: give it turns.
		for (let i = 0; i < 10 && refs.some((r) => r.deref() !== undefined); i++) {
			await new Promise((r) => setTimeout(r, 20));
			gc();
		}
		expect(refs.map((r) => r.deref() !== undefined)).toEqual([false, false, false, false, false, false]);
	});
});
