import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, test } from 'vitest';
import { renderInstructions } from '$lib/domain/markdown';
import { FC_RUNS, MARKER, hostileString } from './payloads';

/**
 * "Everything shown escaped" (issue 9): Svelte escapes every `{expression}`; the only raw HTML a
 * page inserts is `{@html}`. Each `{@html}` in src must show the output of the Markdown sanitiser,
 * and that output must carry no script, event handler, script URL, frame, form or style, whatever
 * the author wrote (OWASP XSS Prevention Cheat Sheet, rule 6: sanitise HTML markup with a
 * library; OWASP XSS Filter Evasion Cheat Sheet for the vectors).
 */
const vectors = [
	`<script>${MARKER}()</script>`,
	`<img src=x onerror=${MARKER}()>`,
	`<a href="javascript:${MARKER}()">x</a>`,
	`[x](javascript:${MARKER}())`,
	`[x](JaVaScRiPt:${MARKER}())`,
	`[x](&#106;avascript:${MARKER}())`,
	`<svg onload=${MARKER}()>`,
	`<iframe src="//evil.example"></iframe>`,
	`<form action="//evil.example"><input name=x></form>`,
	`<style>body{display:none}</style>`,
	`<a href="data:text/html,<script>${MARKER}()</script>">x</a>`,
	`<math><mtext><table><mglyph><style><img src=x onerror=${MARKER}()>`,
	`<scr<script>ipt>${MARKER}()</script>`,
	`<div style="background:url(javascript:${MARKER})">x</div>`,
	'```\n<script>x</script>\n```',
	`![x](x" onerror="${MARKER}())`
];

/** What no sanitised output may contain (tags and attributes as a browser would parse them). */
function dangers(html: string): string[] {
	const found: string[] = [];
	if (/<\s*(script|iframe|object|embed|form|input|style|svg|math|img|link|meta|base)\b/i.test(html)) found.push('dangerous tag');
	if (/<[^>]+\son[a-z]+\s*=/i.test(html)) found.push('event handler');
	if (/<[^>]+\s(href|src|action|formaction|xlink:href)\s*=\s*["']?\s*(javascript|data|vbscript):/i.test(html)) found.push('script URL');
	if (/<[^>]+\sstyle\s*=/i.test(html)) found.push('style attribute');
	return found;
}

function svelteFiles(dir: string): string[] {
	return readdirSync(dir, { recursive: true, encoding: 'utf8' })
		.filter((f) => f.endsWith('.svelte'))
		.map((f) => join(dir, f));
}

describe('HTML a page shows raw', () => {
	test('every {@html} in the app shows sanitised Markdown', () => {
		const raw: string[] = [];
		for (const file of svelteFiles(join(process.cwd(), 'src'))) {
			const text = readFileSync(file, 'utf8');
			for (const m of text.matchAll(/\{@html\s+([^}]+)\}/g)) {
				const expr = m[1].trim();
				// Allowed: a value the file itself derives from renderInstructions, or the server's instructionsHtml (renderInstructions in batches/query.ts).
				const derived = new RegExp(`\\b${expr.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}\\s*=\\s*\\$derived\\(\\s*renderInstructions\\(`).test(text);
				if (!derived && !/\.instructionsHtml$/.test(expr)) raw.push(`${file.replace(process.cwd(), '')}: {@html ${expr}}`);
			}
		}
		expect(raw).toEqual([]);
		const query = readFileSync(join(process.cwd(), 'src/lib/server/batches/query.ts'), 'utf8');
		expect(query).toMatch(/instructionsHtml:\s*renderInstructions\(/);
	});

	test('the Markdown sanitiser lets no known XSS vector through', () => {
		const leaks = vectors.map((v) => [v, dangers(renderInstructions(v))] as const).filter(([, d]) => d.length);
		expect(leaks).toEqual([]);
		// The checker itself catches what it must (so an empty list means something).
		expect(dangers(`<a href="javascript:x">`)).toEqual(['script URL']);
		expect(dangers(`<p onclick=x>`)).toEqual(['event handler']);
	});

	test('no mixture of Markdown, HTML and hostile text gets a script past the sanitiser', () => {
		const piece = fc.oneof(fc.constantFrom(...vectors), hostileString.map((s) => s.slice(0, 500)), fc.constantFrom('**b**', '> q', '| a | b |\n|---|---|\n| 1 | 2 |', '<p>', '</a>', '"', "'", '`', '\n\n'));
		fc.assert(
			fc.property(fc.array(piece, { minLength: 1, maxLength: 6 }), (parts) => {
				const html = renderInstructions(parts.join(''));
				expect(dangers(html)).toEqual([]);
			}),
			{ numRuns: FC_RUNS * 25 }
		);
	});
});
