import { describe, expect, it } from 'vitest';
import { renderInstructions } from '$lib/domain/markdown';

describe('step instructions: Markdown to sanitised HTML', () => {
	it('keeps the structure an author needs', () => {
		const html = renderInstructions('## Weighing\n\n1. Tare\n2. **Weigh** the *sucrose*\n\n| item | amount |\n|---|--:|\n| sucrose | 600.0 g |\n\n`code` and [the SOP](https://example.org/sop)');
		expect(html).toContain('<h4>Weighing</h4>'); // page headings are h1–h2: a step's start at h3
		expect(html).toContain('<ol>');
		expect(html).toContain('<strong>Weigh</strong>');
		expect(html).toContain('<em>sucrose</em>');
		expect(html).toContain('<td align="right">600.0 g</td>');
		expect(html).toContain('<code>code</code>');
		expect(html).toContain('<a href="https://example.org/sop" rel="noopener noreferrer nofollow">the SOP</a>');
	});

	// Payloads from the OWASP XSS Filter Evasion Cheat Sheet (classic forms).
	const payloads = [
		'<script>alert(1)</script>',
		'<SCRIPT SRC=https://example.org/xss.js></SCRIPT>',
		'<img src=x onerror=alert(1)>',
		'<IMG SRC="javascript:alert(\'XSS\');">',
		'<svg onload=alert(1)>',
		'<body onload=alert(1)>',
		'<iframe src="javascript:alert(1)"></iframe>',
		'<a href="javascript:alert(1)">x</a>',
		'<a href="JaVaScRiPt:alert(1)">x</a>',
		'<a href="jav&#x09;ascript:alert(1)">x</a>',
		'<a href=" javascript:alert(1)">x</a>',
		'<a href="data:text/html;base64,PHNjcmlwdD5hbGVydCgxKTwvc2NyaXB0Pg==">x</a>',
		'<a href="vbscript:msgbox(1)">x</a>',
		'<div style="background:url(javascript:alert(1))">x</div>',
		'<p onclick="alert(1)">x</p>',
		'<object data="javascript:alert(1)"></object>',
		'<form action="javascript:alert(1)"><input type=submit></form>',
		'<math><mtext><table><mglyph><style><img src=x onerror=alert(1)>',
		'[x](javascript:alert(1))',
		'[x](JAVASCRIPT:alert(1))',
		'![x](javascript:alert(1))',
		'<details open ontoggle=alert(1)>'
	];

	it.each(payloads)('strips %s', (payload) => {
		const html = renderInstructions(`Text before.\n\n${payload}\n\nText after.`).toLowerCase();
		expect(html).not.toMatch(/<script|<iframe|<object|<svg|<img|<form|<style|<input|<math/);
		expect(html).not.toMatch(/\son[a-z]+\s*=/); // no event handler attributes
		expect(html).not.toMatch(/javascript:|vbscript:|data:/);
		expect(html).not.toContain('style=');
		// Safe text survives (an unclosed <style> or <math> may swallow what follows: also safe).
		expect(html).toContain('text before.');
	});

	it('drops the content of a script, not only its tags', () => {
		expect(renderInstructions('<script>stealCookies()</script>ok')).not.toContain('stealCookies');
	});
});
