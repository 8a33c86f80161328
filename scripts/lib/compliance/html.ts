/**
 * The validation summary as one self-contained HTML page (no scripts, no external files), so it
 * can be archived beside the PDF and opened anywhere. Every text from the matrix or the run is
 * escaped: test titles and failure messages are data, never markup.
 */
import { totalsOf, type Evaluation, type RefResult, type RowResult } from './evaluate';
import { describeRun, describeTested, formatUtc, isBad, REF_MARK, REQUIREMENT_MARK, ROW_MARK, type Mark, type ReportMeta, type Shape } from './summary';

export function escapeHtml(text: string): string {
	return text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

/** Inline Markdown of the matrix cells: only `code` is kept, as <code>. */
function cell(text: string): string {
	return text
		.split(/(`[^`]*`)/)
		.map((part) => (part.startsWith('`') && part.endsWith('`') && part.length > 1 ? `<code>${escapeHtml(part.slice(1, -1))}</code>` : escapeHtml(part.replace(/\*\*/g, ''))))
		.join('');
}

const SHAPE: Record<Shape, string> = { dot: '●', diamond: '◆', ring: '○', cross: '✕' };

function mark(m: Mark, verdict: string): string {
	return `<span class="mark ${isBad(verdict) ? 'bad' : 'ok'}"><span aria-hidden="true">${SHAPE[m.shape]}</span> ${escapeHtml(m.word)}</span>`;
}

function refList(refs: RefResult[]): string {
	if (refs.length === 0) return '';
	const items = refs.map((r) => {
		const runs = r.matches.length > 1 ? ` <span class="muted">(${r.matches.length} runs)</span>` : '';
		const why = r.verdict === 'failed' ? r.matches.filter((m) => m.outcome !== 'passed').map((m) => `<div class="why">${escapeHtml(`${m.status}: ${m.message ?? m.fullName}`)}</div>`).join('') : '';
		return `<li>${mark(REF_MARK[r.verdict], r.verdict)} <code>${escapeHtml(r.ref.file)}</code> › ${escapeHtml(r.ref.title)}${runs}${why}</li>`;
	});
	return `<ul class="refs">${items.join('')}</ul>`;
}

function evidence(r: RowResult): string {
	const parts = [refList(r.refs)];
	if (r.row.siteProcedure) parts.push(`<p class="site"><strong>Site procedure:</strong> ${cell(r.row.siteProcedure)}</p>`);
	if (r.row.notApplicable) parts.push(`<p class="site"><strong>Not applicable:</strong> ${cell(r.row.notApplicable)}</p>`);
	return parts.join('');
}

const STYLE = `
body { font-family: 'Noto Sans', system-ui, sans-serif; color: #14202e; margin: 2rem; line-height: 1.5; max-width: 80rem; }
h1 { font-size: 1.6rem; margin: 0 0 .5rem; } h2 { font-size: 1.2rem; margin-top: 2rem; border-bottom: 2px solid #4a86b8; }
table { border-collapse: collapse; width: 100%; font-size: .9rem; } th, td { border: 1px solid #c9d3dd; padding: .35rem .5rem; vertical-align: top; text-align: left; }
th { background: #eef3f7; } code { font-size: .85em; background: #f3f5f7; padding: 0 .2em; word-break: break-word; }
.mark { white-space: nowrap; font-weight: 600; } .mark.ok { color: #1d5e3a; } .mark.bad { color: #a3231b; }
.verdict { font-size: 1.2rem; padding: .6rem 1rem; border: 2px solid; display: inline-block; }
.verdict.ok { border-color: #1d5e3a; color: #1d5e3a; } .verdict.bad { border-color: #a3231b; color: #a3231b; }
.refs { margin: 0; padding-left: 1rem; } .why { color: #a3231b; font-size: .85em; } .muted { color: #5b6875; } .site { margin: .3rem 0; }
dl { display: grid; grid-template-columns: max-content 1fr; gap: .2rem 1rem; } dt { font-weight: 600; }
@media print { body { margin: 0; } h2 { break-after: avoid; } tr { break-inside: avoid; } }`;

export function renderHtml(e: Evaluation, meta: ReportMeta): string {
	const t = totalsOf(e);
	const valid = e.problems.length === 0;
	const verdict = valid
		? `<p class="verdict ok">● Every clause is covered and every test the matrix names passed in this run.</p>`
		: `<p class="verdict bad">✕ NOT VALID: ${e.problems.length} problem${e.problems.length === 1 ? '' : 's'} (listed below).</p>`;
	const problems = valid ? '' : `<h2>Problems</h2><ol>${e.problems.map((p) => `<li>${cell(p)}</li>`).join('')}</ol>`;
	const clauseRows = e.clauses
		.map((r) => `<tr><td><strong>${escapeHtml(r.row.clause)}</strong></td><td>${cell(r.row.asks)}</td><td>${cell(r.row.how)}</td><td>${escapeHtml(r.row.requirements.join(', '))}</td><td>${mark(ROW_MARK[r.verdict], r.verdict)}</td><td>${evidence(r)}</td></tr>`)
		.join('\n');
	const reqRows = e.requirements
		.map((r) => {
			const tests = [...new Map(r.rows.flatMap((row) => row.refs).map((x) => [`${x.ref.file} › ${x.ref.title}`, x])).values()];
			const clauses = r.clauses.join('; ');
			return `<tr><td><strong>${escapeHtml(r.requirement.id)}</strong></td><td>${cell(r.requirement.text)}</td><td>${mark(REQUIREMENT_MARK[r.verdict], r.verdict)}</td><td>${cell(clauses)}</td><td>${refList(tests)}</td></tr>`;
		})
		.join('\n');
	const detailRows = e.details
		.map((r) => `<tr><td>${cell(r.row.clause)}</td><td>${escapeHtml(r.row.requirements.join(', '))}</td><td>${cell(r.row.how)}</td><td>${mark(ROW_MARK[r.verdict], r.verdict)}</td><td>${evidence(r)}</td></tr>`)
		.join('\n');
	return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>Rimebook validation summary ${escapeHtml(meta.version)}</title><style>${STYLE}</style></head>
<body>
<h1>Rimebook validation summary</h1>
${verdict}
<dl>
<dt>Version</dt><dd>${escapeHtml(meta.version)}</dd>
<dt>Commit</dt><dd><code>${escapeHtml(meta.commit)}</code>${meta.dirty ? ' (with uncommitted changes in the working tree)' : ''}</dd>
<dt>Tested commit</dt><dd>${escapeHtml(describeTested(meta))}</dd>
<dt>Unit and integration run</dt><dd>${escapeHtml(describeRun(meta.vitest, meta.vitestSource))}</dd>
<dt>End-to-end run</dt><dd>${escapeHtml(describeRun(meta.playwright, meta.playwrightSource))}</dd>
<dt>Built</dt><dd>${escapeHtml(formatUtc(meta.generatedAt))}</dd>
<dt>Clauses</dt><dd>${t.clauses.total}: ${t.clauses.proven + t.clauses['proven + site procedure']} proven by tests (${t.clauses['proven + site procedure']} of them with a site procedure too), ${t.clauses['site procedure']} by site procedure alone, ${t.clauses['not applicable']} not applicable, ${t.clauses.failed + t.clauses.empty} failed</dd>
<dt>Requirements</dt><dd>${t.requirements.total}: ${t.requirements.proven} proven, ${t.requirements['site procedure']} by site procedure, ${t.requirements.planned} planned, ${t.requirements.failed} failed, ${t.requirements.untraced} not traced</dd>
<dt>Tests named</dt><dd>${t.refs.total}: ${t.refs.passed} passed, ${t.refs.failed} failed, ${t.refs.missing} not in the run, ${t.refs['no-run']} without a run</dd>
</dl>
${problems}
<h2>Clauses</h2>
<table><thead><tr><th>clause</th><th>the regulation asks</th><th>how Rimebook meets it</th><th>requirements</th><th>verdict</th><th>evidence</th></tr></thead><tbody>
${clauseRows}
</tbody></table>
<h2>Requirements</h2>
<table><thead><tr><th>ID</th><th>requirement</th><th>verdict</th><th>clauses</th><th>tests</th></tr></thead><tbody>
${reqRows}
</tbody></table>
<h2>Requirements to tests</h2>
<table><thead><tr><th>clause</th><th>requirement</th><th>how Rimebook meets it</th><th>verdict</th><th>tests</th></tr></thead><tbody>
${detailRows}
</tbody></table>
<p class="muted">Built by <code>npm run compliance:report</code> from compliance/requirements.md, compliance/traceability.md and the test run named above. A clause is proven only when every test named for it ran and passed in that run.</p>
</body></html>
`;
}
