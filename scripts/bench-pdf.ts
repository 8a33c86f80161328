/**
 * Benchmark of the printed batch record (issue 8, "Done when"): an in-memory batch of 500 steps
 * (10 sections × 50; every step performed and signed, every 10th corrected, every 5th critical and
 * verified, 25 deviations) with 5,000 audit events and one 48-hour freeze-drying cycle chart —
 * all synthetic and invented — is laid out, its canonical JSON attached, and signed (PKCS#7 with a
 * freshly generated self-signed RSA-2048 certificate), exactly as GET /api/batches/<id>/record.pdf
 * renders. No database: the model is built in memory (record-data.ts is what reads a real one).
 *
 * Prints seconds per stage (wall and CPU), pages, file size and peak memory (resourceUsage().maxRSS, and the
 * largest heap seen), and ms per page as the ratio to watch. Run: npm run bench:pdf
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { canonicalJson } from '../src/lib/domain/canonical';
import { demoTemplate } from '../src/lib/domain/fixtures/demo-template';
import { analyseCycleDetail } from '../src/lib/domain/lyo/analysis';
import { buildChartOverlay } from '../src/lib/domain/lyo/overlay';
import { buildSyntheticCycle } from '../src/lib/domain/lyo/synthetic';
import type { SignatureFacts } from '../src/lib/domain/signature';
import type { Field } from '../src/lib/schemas/template';
import { messagesFor } from '../src/lib/i18n';
import { findStepRecipe } from '../src/lib/server/cycles/recipe-source';
import { buildChartData } from '../src/lib/server/cycles/chart';
import type { BatchView, EntryView, StepView } from '../src/lib/server/batches/query';
import { generateSelfSigned, toP12, type SigningIdentity } from '../src/lib/server/site/certificate';
import { renderRecordDocument } from '../src/lib/server/pdf';
import type { AuditRow, RecordModel, SignatureRow } from '../src/lib/server/pdf/model';

const STEPS = 500;
const SECTIONS = 10;
const EVENTS = 5000;
const TZ = 'Europe/Berlin';
const people = ['Ilse Varndahl', 'Jonas Mærsk-Ødegård', 'Chiara Lüthi', 'Noor Abernethy'];

let peakHeap = 0;
const sampler = setInterval(() => (peakHeap = Math.max(peakHeap, process.memoryUsage().heapUsed)), 20);

function at(i: number): string {
	return new Date(Date.UTC(2026, 10, 2, 6, 0, 0) + i * 37_000).toISOString();
}

function sig(name: string, meaning: string, i: number): SignatureFacts {
	return { printedName: name, meaning, at: at(i), timeZone: TZ, method: 'password' };
}

const fields: Field[] = [
	{ key: 'mass', label: 'Net weight (invented)', kind: 'number', unit: 'g', decimals: 1, required: true, limits: { kind: 'range', min: 597, max: 603 } },
	{ key: 'temp', label: 'Room temperature', kind: 'number', unit: 'degC', decimals: 1, required: true, limits: { kind: 'range', min: 15, max: 25 } },
	{ key: 'note', label: 'Observation', kind: 'text', maxLength: 200, multiline: false, required: false },
	{ key: 'clean', label: 'Line clearance done', kind: 'check', expected: true, required: true }
];

function entry(step: number, version: number, mass: string): EntryView {
	const id = `e-${step}-${version}`;
	const out = Number(mass) > 603 ? ['mass'] : [];
	return {
		id,
		values: {
			mass: { kind: 'number', text: mass, unit: 'g', value: Number(mass), canonical: { value: Number(mass) / 1000, unit: 'kg' } },
			temp: { kind: 'number', text: '21.4', unit: 'degC', value: 21.4, canonical: { value: 21.4, unit: 'degC' } },
			note: { kind: 'text', value: `Schritt ${step}: Größe ≤ 5 µm, 21 °C, Prüfung ±0,5 % in Ordnung` },
			clean: { kind: 'check', value: true }
		},
		calculations: {},
		outOfLimits: out,
		comment: out.length ? 'Overshot while pouring (invented).' : version > 1 ? 'Re-read the print-out (invented).' : null,
		reasonCode: version > 1 ? 'transcription-error' : null,
		reasonLabel: version > 1 ? 'Transcription error' : null,
		supersedes: version > 1 ? `e-${step}-${version - 1}` : null,
		supersededBy: null,
		workedAt: at(step * 10 + version),
		recordedAt: at(step * 10 + version),
		late: false,
		performedBy: 'u-op',
		performedByName: people[step % 2],
		signature: sig(people[step % 2], 'performed', step * 10 + version),
		signatureBound: true
	};
}

function buildView(): { view: BatchView; signatures: SignatureRow[] } {
	const signatures: SignatureRow[] = [];
	const sections: BatchView['sections'] = [];
	const deviations: BatchView['deviations'] = [];
	for (let s = 0; s < SECTIONS; s++) {
		const steps: StepView[] = [];
		for (let k = 0; k < STEPS / SECTIONS; k++) {
			const n = s * (STEPS / SECTIONS) + k;
			const corrected = n % 10 === 0;
			const first = entry(n, 1, corrected ? '605.0' : '600.2');
			const history = corrected ? [{ ...first, supersededBy: `e-${n}-2` }, entry(n, 2, '600.4')] : [first];
			const critical = n % 5 === 0;
			const verification = critical ? { entryId: history.at(-1)!.id, verifiedBy: 'u-sup', verifiedByName: people[2], verifiedAt: at(n * 10 + 5), signature: sig(people[2], 'verified', n * 10 + 5), signatureBound: true } : null;
			for (const e of history) signatures.push({ ...e.signature!, entityType: 'step-entry', entityId: e.id });
			if (verification) signatures.push({ ...verification.signature, entityType: 'step-verification', entityId: `v-${n}` });
			const devs = corrected && n % 20 === 0 ? [{ id: `d-${n}`, number: `DEV-2026-${String(n).padStart(4, '0')}`, stepKey: `step_${n}`, entryId: first.id, runId: null, kind: 'out-of-limit', title: `Out of limits in step ${s + 1}.${k + 1}`, description: 'Net weight: 605.0 g is above (limits 597 … 603 g).', status: 'open', createdAt: at(n * 10 + 1), createdByName: people[0] }] : [];
			deviations.push(...devs);
			steps.push({
				key: `step_${n}`,
				label: `${s + 1}.${k + 1}`,
				title: `Synthetic operation ${n + 1} (invented)`,
				instructionsHtml: '',
				roles: ['operator'],
				critical,
				mayRunOutOfOrder: false,
				state: verification ? 'verified' : 'performed',
				waitingFor: [],
				equipment: [],
				materials: [],
				fields,
				current: history.at(-1)!,
				history,
				verification,
				deviations: devs,
				attachments: []
			});
		}
		sections.push({ key: `section_${s}`, title: `Synthetic unit procedure ${s + 1}`, steps });
	}
	const view: BatchView = {
		id: 'b-bench',
		number: 'BENCH-0500',
		status: 'awaiting-review',
		version: 1,
		masterRecordId: 'm-bench',
		product: 'Invented product 20 mg, powder for solution',
		productCode: 'INV-020',
		strength: '20 mg per vial',
		batchSize: { value: 12, unit: 'L' },
		issuedAt: at(0),
		issuedByName: people[3],
		snapshotHash: 'ab'.repeat(32),
		issueSignature: sig(people[3], 'issued', 0),
		issueSignatureBound: true,
		unboundSignatures: 0,
		progress: { done: STEPS, total: STEPS, percent: 100, next: null, complete: true },
		sections,
		deviations
	};
	return { view, signatures };
}

function buildEvents(): AuditRow[] {
	const actions = ['batch.step.perform', 'signature.sign', 'batch.step.verify', 'batch.step.correct', 'deviation.raise'];
	return Array.from({ length: EVENTS }, (_, i) => ({
		seq: 1000 + i,
		at: at(i),
		actorName: people[i % people.length],
		action: actions[i % actions.length],
		entityType: 'step-entry',
		entityId: `e-${Math.floor(i / 10)}-1`,
		reason: i % 50 === 0 ? 'Transcription error: re-read the print-out' : null,
		before: i % 5 === 3 ? { mass: '605.0' } : null,
		after: { mass: '600.4', unit: 'g', note: 'Größe ≤ 5 µm' },
		hash: (i % 16).toString(16).repeat(64)
	}));
}

function buildChart() {
	const recipe = findStepRecipe(demoTemplate, 'lyo_cycle')!;
	const { series } = buildSyntheticCycle({ recipe, sampleS: 30, seed: 11, shelfExcursions: [{ startS: 20 * 3600, endS: 20 * 3600 + 40 * 60, amount: 4 }] });
	const detail = analyseCycleDetail(series, recipe);
	const o = buildChartOverlay(series, detail);
	const data = buildChartData(series, { channels: null, from: null, to: null, maxPoints: 900 });
	return { title: 'LYO-99 · synthetic-cycle.csv (invented)', t: data.t, channels: data.channels, overlay: { phases: o.phases, shelfBands: o.shelfBands, pressureBands: o.pressureBands, shelfSetpoint: o.shelfSetpoint, excursions: o.excursions } };
}

async function main() {
	const t0 = performance.now();
	const { view, signatures } = buildView();
	const events = buildEvents();
	const chart = buildChart();
	const canonical = canonicalJson({ type: 'rimebook.executed-batch-record', version: 1, view, signatures, events });
	const checkpoint = { size: 6000, root: 'cd'.repeat(32), head: { seq: 6000, hash: 'ef'.repeat(32) }, at: at(6000), keyId: '0123456789abcdef0123456789abcdef', statement: '{}', signature: 'A'.repeat(88) };
	const model: RecordModel = {
		site: { name: 'Invented Park fill-finish (benchmark)', timeZone: TZ },
		generatedAt: new Date().toISOString(),
		generatedBy: people[2],
		view,
		master: { code: 'MBR-BENCH', version: 3 },
		bounds: { mass: { limits: { min: 597, max: 603 } }, temp: { limits: { min: 15, max: 25 } } },
		signatures,
		dispositions: [],
		dispositionComment: null,
		charts: [chart],
		audit: { events, total: events.length, checkpoint, filter: { batch: view.id } },
		canonical
	};
	const t1 = performance.now();
	const cert = generateSelfSigned('Invented Park');
	const identity: SigningIdentity = { p12: toP12(cert, 'bench-only'), passphrase: 'bench-only', fingerprint: cert.fingerprint, subject: cert.subject, source: 'generated' };
	const t2 = performance.now();
	const cpu0 = process.cpuUsage();
	const pdf = await renderRecordDocument(model, identity, messagesFor('en').pdf);
	const cpu = process.cpuUsage(cpu0);
	const t3 = performance.now();
	clearInterval(sampler);
	peakHeap = Math.max(peakHeap, process.memoryUsage().heapUsed);

	const dir = mkdtempSync(join(tmpdir(), 'rimebook-bench-pdf-'));
	const file = join(dir, pdf.filename);
	writeFileSync(file, pdf.bytes);
	let pages = NaN;
	let valid = 'pdfsig not installed';
	if (existsSync('/usr/bin/pdfinfo')) pages = Number(/Pages:\s+(\d+)/.exec(spawnSync('/usr/bin/pdfinfo', [file], { encoding: 'utf8' }).stdout)?.[1]);
	if (existsSync('/usr/bin/pdfsig')) valid = /Signature is Valid/.test(spawnSync('/usr/bin/pdfsig', [file], { encoding: 'utf8' }).stdout) ? 'valid' : 'NOT VALID';
	rmSync(dir, { recursive: true, force: true });

	const s = (ms: number) => (ms / 1000).toFixed(2);
	const mb = (b: number) => (b / 1024 / 1024).toFixed(1);
	console.log(`PDF batch record benchmark: ${STEPS} steps, ${EVENTS} audit events, 1 cycle chart (synthetic, invented)`);
	console.log(`  build the in-memory model        ${s(t1 - t0)} s`);
	console.log(`  self-signed certificate + P12    ${s(t2 - t1)} s`);
	console.log(`  lay out, attach and sign         ${s(t3 - t2)} s wall, ${s((cpu.user + cpu.system) / 1000)} s CPU (the machine is shared: CPU time is the steadier number)`);
	console.log(`  pages ${pages}, file ${mb(pdf.bytes.length)} MB, attachment ${mb(Buffer.byteLength(canonical))} MB, signature ${valid} (pdfsig)`);
	console.log(`  ms per page (render + sign)      ${((t3 - t2) / pages).toFixed(1)}`);
	console.log(`  peak memory: maxRSS ${mb(process.resourceUsage().maxRSS * 1024)} MB, largest heap seen ${mb(peakHeap)} MB`);
}

main().catch((err) => {
	console.error(err);
	process.exit(1);
});
