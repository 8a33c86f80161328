import { EXPORT_FORMAT, importTemplate, type TemplateIssue } from '$lib/domain/template';

/**
 * What an import sends: an export file of Rimebook ({ format, contentHash, template }: format and
 * hash are checked, Annex 11, 5) or a bare template (checked by the service as any other).
 */
export function readImport(body: unknown): { ok: true; template: unknown } | { ok: false; issues: TemplateIssue[] } {
	if (body && typeof body === 'object' && 'format' in body && (body as { format?: unknown }).format === EXPORT_FORMAT) {
		const r = importTemplate(JSON.stringify(body));
		return r.ok ? { ok: true, template: r.template } : { ok: false, issues: r.issues };
	}
	return { ok: true, template: body };
}

/** The same for a file's text. */
export function readImportText(text: string): { ok: true; template: unknown } | { ok: false; issues: TemplateIssue[] } {
	try {
		return readImport(JSON.parse(text));
	} catch (e) {
		return { ok: false, issues: [{ path: [], code: 'import.not-json', message: `the file is not JSON: ${(e as Error).message}` }] };
	}
}
