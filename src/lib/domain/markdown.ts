/**
 * Step instructions: Markdown written by authors, shown to operators as sanitised HTML.
 *
 * Marked turns Markdown into HTML (raw HTML in the source passes through it), so the output
 * always goes through sanitize-html with a tight allow-list: text structure, emphasis, lists,
 * tables, code and links to http(s)/mailto only. No scripts, styles, event handlers, images,
 * forms or frames; the page's Content-Security-Policy is the second line of defence.
 */
import { Marked } from 'marked';
import sanitizeHtml from 'sanitize-html';

export const MAX_INSTRUCTIONS_LENGTH = 20_000;

const marked = new Marked({ gfm: true, breaks: false, async: false });

const policy: sanitizeHtml.IOptions = {
	allowedTags: [
		'p', 'br', 'hr', 'h3', 'h4', 'h5', 'h6', 'strong', 'em', 'del', 'code', 'pre', 'blockquote',
		'ul', 'ol', 'li', 'table', 'thead', 'tbody', 'tr', 'th', 'td', 'a', 'sub', 'sup'
	],
	allowedAttributes: { a: ['href', 'title', 'rel'], ol: ['start'], th: ['align'], td: ['align'] },
	allowedSchemes: ['http', 'https', 'mailto'],
	allowedSchemesByTag: {},
	allowProtocolRelative: false,
	// Dropped together with their content, not unwrapped into visible text.
	nonTextTags: ['script', 'style', 'textarea', 'option', 'noscript', 'title', 'iframe', 'object', 'embed', 'svg', 'math'],
	disallowedTagsMode: 'discard',
	// Headings 1–2 belong to the page; a step's own headings start at level 3.
	transformTags: {
		h1: 'h3',
		h2: 'h4',
		a: (tagName, attribs) => ({ tagName, attribs: { ...attribs, rel: 'noopener noreferrer nofollow' } })
	}
};

/** Renders step instructions to HTML that is safe to insert into a page. */
export function renderInstructions(markdown: string): string {
	const html = marked.parse(markdown.slice(0, MAX_INSTRUCTIONS_LENGTH), { async: false });
	return sanitizeHtml(html, policy);
}
