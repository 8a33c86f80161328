/**
 * The validation summary as data shared by the HTML and the PDF: the facts that identify the
 * run (version, commit, dates) and the words each verdict is printed with. A verdict is always
 * a word and a shape, never a colour alone (design.md "Look and words").
 */
import type { RefVerdict, RequirementVerdict, RowVerdict } from './evaluate';
import type { RunSummary } from './runs';

export interface ReportMeta {
	version: string;
	commit: string;
	/** The working tree had uncommitted changes when the report was built. */
	dirty: boolean;
	/** ISO 8601 UTC. */
	generatedAt: string;
	vitest: RunSummary | null;
	playwright: RunSummary | null;
	vitestSource: string;
	playwrightSource: string;
	/** What test-results/run.json (written by `npm test`) says was tested; null without it. */
	tested: RunIdentity | null;
}

export interface RunIdentity {
	commit: string | null;
	dirty: boolean;
	startedAt: string | null;
}

/** Reads test-results/run.json; anything else is treated as absent (the report then says so). */
export function readRunIdentity(json: unknown): RunIdentity | null {
	if (typeof json !== 'object' || json === null) return null;
	const o = json as Record<string, unknown>;
	return {
		commit: typeof o.commit === 'string' ? o.commit : null,
		dirty: o.dirty === true,
		startedAt: typeof o.startedAt === 'string' ? o.startedAt : null
	};
}

/**
 * The summary must describe the code that was tested: a run of another commit, or of a working
 * tree with uncommitted changes, cannot be filed as the validation of this commit.
 */
export function checkRunIdentity(tested: RunIdentity | null, commit: string, dirty: boolean): string | null {
	if (!tested) return null;
	if (tested.commit && tested.commit !== commit) return `the test run was of commit ${tested.commit}, but the working tree is at ${commit}: run \`npm test\` again`;
	if (tested.dirty || dirty) return `the test run${tested.dirty ? ' was made with' : ' is clean, but the working tree now has'} uncommitted changes: commit, then run \`npm test\` again`;
	return null;
}

export type Shape = 'dot' | 'diamond' | 'ring' | 'cross';
export interface Mark {
	shape: Shape;
	word: string;
}

export const ROW_MARK: Record<RowVerdict, Mark> = {
	proven: { shape: 'dot', word: 'proven' },
	'proven + site procedure': { shape: 'dot', word: 'proven + site procedure' },
	'site procedure': { shape: 'diamond', word: 'site procedure' },
	'not applicable': { shape: 'ring', word: 'not applicable' },
	failed: { shape: 'cross', word: 'FAILED' },
	empty: { shape: 'cross', word: 'NO EVIDENCE' }
};

export const REQUIREMENT_MARK: Record<RequirementVerdict, Mark> = {
	proven: { shape: 'dot', word: 'proven' },
	'site procedure': { shape: 'diamond', word: 'site procedure' },
	failed: { shape: 'cross', word: 'FAILED' },
	planned: { shape: 'ring', word: 'planned' },
	withdrawn: { shape: 'ring', word: 'withdrawn' },
	untraced: { shape: 'cross', word: 'NOT TRACED' }
};

export const REF_MARK: Record<RefVerdict, Mark> = {
	passed: { shape: 'dot', word: 'passed' },
	failed: { shape: 'cross', word: 'FAILED' },
	missing: { shape: 'cross', word: 'NOT IN RUN' },
	'no-run': { shape: 'cross', word: 'NO RUN' }
};

export function isBad(verdict: string): boolean {
	return ['failed', 'empty', 'untraced', 'missing', 'no-run'].includes(verdict);
}

/** "2026-12-02 00:00:12 UTC": times are UTC from the run's own clock (URS-F-06). */
export function formatUtc(iso: string | null): string {
	if (!iso) return '—';
	const d = new Date(iso);
	if (Number.isNaN(d.getTime())) return iso;
	return `${d.toISOString().slice(0, 19).replace('T', ' ')} UTC`;
}

export function describeTested(meta: ReportMeta): string {
	if (!meta.tested) return 'not recorded (no test-results/run.json): the commit above is the one checked out when the report was built';
	return `${meta.tested.commit ?? 'unknown'}${meta.tested.dirty ? ' with uncommitted changes' : ''}, run started ${formatUtc(meta.tested.startedAt)}`;
}

export function describeRun(run: RunSummary | null, source: string): string {
	if (!run) return `none found (${source})`;
	return `${formatUtc(run.startedAt)}: ${run.passed} passed, ${run.failed} failed, ${run.skipped} skipped (${source})`;
}
