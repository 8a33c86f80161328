/**
 * What the hostile-input test sends to each route: which stored record each path parameter
 * names (so handlers get past "not found" and hostile input reaches the code behind it), and
 * for the write routes a plausible body (correct demo signature included) that the generators
 * then mutate field by field. A route file missing here fails the test, as a route missing from
 * route-permissions.ts fails the role × route test: a new route means saying how to attack it.
 *
 * Param sources name a table (its ids), `step_key` (step keys of the demo batch) or `hostile`
 * (only hostile strings).
 */
export const DEMO_PASSWORD = 'frost-demo-2026';

export interface Ctx {
	ids: Record<string, string[]>;
}

export interface RouteInput {
	params?: Record<string, string>;
	/** Plausible bodies per export (`POST`, `actions.enter`…): JSON for +server.ts, string fields for actions. */
	base?: Record<string, (ctx: Ctx) => Record<string, unknown>>;
	/** The route takes raw bytes (an upload). */
	upload?: boolean;
}

const first = (ctx: Ctx, table: string) => ctx.ids[table]?.[0] ?? 'none';
const sig = { password: DEMO_PASSWORD };
const formSig = { sign_password: DEMO_PASSWORD };
const sucrose = { sucrose_lot: 'SUC-40871', sucrose_balance: 'BAL-07', sucrose_weighed: '600.0' };

export const routeInputs: Record<string, RouteInput> = {
	'/+layout.server.ts': {},
	'/(app)/+layout.server.ts': {},
	'/(app)/+page.server.ts': {},
	'/(auth)/login/+page.server.ts': { base: { 'actions.default': () => ({ username: 'operator', password: DEMO_PASSWORD }) } },
	'/(auth)/password/+page.server.ts': { base: { 'actions.default': () => ({ currentPassword: DEMO_PASSWORD, newPassword: 'a-much-longer-passphrase-2026', confirmPassword: 'a-much-longer-passphrase-2026' }) } },
	'/logout/+server.ts': {},
	'/(app)/profile/+page.server.ts': { base: { 'actions.acknowledge': () => ({ password: DEMO_PASSWORD }), 'actions.removePasskey': () => ({ passkeyId: 'x' }) } },
	'/(app)/people/+page.server.ts': {},
	'/(app)/people/new/+page.server.ts': { base: { 'actions.default': () => ({ username: 'hostile-new', name: 'Hostile New', email: 'new@example.org', kind: 'person', roles: 'operator', reason: 'hostile test' }) } },
	'/(app)/people/[id]/+page.server.ts': { params: { id: 'user' }, base: { 'actions.update': () => ({ name: 'Renamed', email: 'r@example.org', roles: 'operator', reason: 'hostile test' }), 'actions.createToken': () => ({ label: 'hostile', permissions: 'batch.read', expiresInDays: '30', reason: 'hostile test' }) } },
	'/(app)/audit/+page.server.ts': {},
	'/(app)/audit/verify/+page.server.ts': {},
	'/(app)/batches/+page.server.ts': {},
	'/(app)/batches/[id]/+page.server.ts': { params: { id: 'batch' } },
	'/(app)/batches/[id]/steps/[stepKey]/+page.server.ts': {
		params: { id: 'batch', stepKey: 'step_key' },
		base: {
			'actions.enter': () => ({ payload: JSON.stringify({ values: sucrose, reasonCode: 'instrument-re-read', comment: 'hostile', version: 1 }), ...formSig }),
			'actions.verify': () => ({ payload: JSON.stringify({ version: 1 }), ...formSig })
		}
	},
	'/(app)/preferences/+page.server.ts': { base: { 'actions.default': () => ({ locale: 'de', timeFormat: '24h', temperatureUnit: 'degC', pressureUnit: 'Pa' }) } },
	'/(app)/settings/execution/+page.server.ts': { base: { 'actions.code': () => ({ code: 'hostile', label: 'Hostile', active: 'on', sortOrder: '9', reason: 'hostile test' }), 'actions.late': () => ({ minutes: '30', reason: 'hostile test' }) } },
	'/(app)/masters/+page.server.ts': {},
	'/(app)/masters/new/+page.server.ts': { base: { 'actions.default': () => ({ productName: 'Hostile', productCode: 'HST-1', strength: '1 mg', dosageForm: 'powder', batchSize: '1000', batchSizeUnit: 'vials', yield: '98', yieldUnit: '%' }) } },
	'/(app)/masters/[id]/+page.server.ts': { params: { id: 'master_record' }, base: { 'actions.submit': () => ({ reason: 'hostile', ...formSig }), 'actions.return': () => ({ reason: 'hostile', ...formSig }) } },
	'/(app)/masters/[id]/edit/+page.server.ts': { params: { id: 'master_record' }, base: { 'actions.save': () => ({ revision: '1', template: '{"sections":[]}' }) } },
	'/(app)/masters/[id]/diff/+page.server.ts': { params: { id: 'master_record' } },
	'/(app)/masters/[id]/issue/+page.server.ts': { params: { id: 'master_record' }, base: { 'actions.issue': () => ({ batchNumber: 'HST-0001', batchSize: '1000', reason: 'hostile', ...formSig }), 'actions.numbering': () => ({ pattern: '{product}-{yy}{seq:4}', reason: 'hostile' }) } },
	'/(app)/equipment/+page.server.ts': {},
	'/(app)/equipment/[id]/+page.server.ts': { params: { id: 'equipment' }, base: { 'actions.calibrate': () => ({ calibratedOn: '2026-11-01', calibrationDueOn: '2027-11-01', reference: 'CAL-1', reason: 'hostile' }), 'actions.addInstrument': () => ({ tag: 'TT-9', name: 'Probe', role: 'product-temperature', unit: 'degC', reason: 'hostile' }) } },
	'/(app)/cycles/+page.server.ts': {},
	'/(app)/cycles/import/+page.server.ts': {},
	'/(app)/cycles/[id]/+page.server.ts': { params: { id: 'cycle_run' }, base: { 'actions.leak': () => ({ fromH: '0', toH: '0.5' }) } },
	// Added this round by other areas (DEV, REV, PDF, MAIL); params only, the field names come from their sources.
	'/(app)/dev/mail/+page.server.ts': {},
	'/(app)/deviations/+page.server.ts': {},
	'/(app)/deviations/[id]/+page.server.ts': { params: { id: 'deviation' } },
	'/(app)/deviations/new/+page.server.ts': { base: { 'actions.default': (ctx) => ({ batchId: first(ctx, 'batch'), title: 'Hostile', description: 'hostile test', kind: 'process' }) } },
	'/(app)/preferences/notifications/+page.server.ts': {},
	'/(app)/review/+page.server.ts': {},
	'/(app)/review/[id]/+page.server.ts': { params: { id: 'batch' } },
	'/api/audit/report.pdf/+server.ts': {},
	'/api/batches/[id]/disposition/+server.ts': { params: { id: 'batch' }, base: { POST: () => ({ decision: 'released', comment: 'hostile', signature: sig }) } },
	'/api/batches/[id]/record.pdf/+server.ts': { params: { id: 'batch' } },
	'/api/batches/[id]/review/+server.ts': { params: { id: 'batch' } },
	'/api/deviations/+server.ts': { base: { POST: (ctx) => ({ batchId: first(ctx, 'batch'), title: 'Hostile', description: 'hostile test', kind: 'process' }) } },
	'/api/deviations/[id]/+server.ts': { params: { id: 'deviation' } },
	'/api/deviations/[id]/transitions/+server.ts': { params: { id: 'deviation' }, base: { POST: () => ({ to: 'investigating', signature: sig }) } },
	'/(app)/admin/backup/+page.server.ts': {},
	'/api/health/+server.ts': {},
	'/api/me/+server.ts': {},
	'/api/me/passkeys/+server.ts': {},
	'/api/me/passkeys/options/+server.ts': {},
	'/api/me/signing/options/+server.ts': {},
	'/api/auth/passkey/+server.ts': {},
	'/api/auth/passkey/options/+server.ts': {},
	'/api/users/+server.ts': {},
	'/api/users/[id]/+server.ts': { params: { id: 'user' } },
	'/api/audit/+server.ts': {},
	'/api/audit/checkpoints/+server.ts': {},
	'/api/audit/consistency/+server.ts': {},
	'/api/audit/export/+server.ts': {},
	'/api/audit/proof/[seq]/+server.ts': { params: { seq: 'audit_event' } },
	'/api/audit/public-key/+server.ts': {},
	'/api/audit/verify/+server.ts': {},
	'/api/batches/+server.ts': { base: { POST: (ctx) => ({ masterRecordId: first(ctx, 'master_record'), batchSize: 1000, signature: sig }) } },
	'/api/batches/[id]/+server.ts': { params: { id: 'batch' } },
	'/api/batches/[id]/lookup/+server.ts': { params: { id: 'batch' } },
	'/api/batches/[id]/steps/[stepKey]/entries/+server.ts': { params: { id: 'batch', stepKey: 'step_key' }, base: { POST: () => ({ values: sucrose, reasonCode: 'instrument-re-read', comment: 'hostile', signature: sig }) } },
	'/api/batches/[id]/steps/[stepKey]/verify/+server.ts': { params: { id: 'batch', stepKey: 'step_key' }, base: { POST: () => ({ signature: sig }) } },
	'/api/batches/[id]/attachments/+server.ts': { params: { id: 'batch' }, upload: true },
	'/api/batches/[id]/attachments/[attachmentId]/+server.ts': { params: { id: 'batch', attachmentId: 'attachment' } },
	'/api/masters/+server.ts': {},
	'/api/masters/[id]/+server.ts': { params: { id: 'master_record' } },
	'/api/cycles/analyse/+server.ts': { upload: true },
	'/api/equipment/[id]/mappings/+server.ts': { params: { id: 'equipment' }, base: { POST: () => ({ name: 'hostile', mapping: { time: 'Time' } }) } },
	'/api/equipment/[id]/runs/+server.ts': { params: { id: 'equipment' } },
	'/api/runs/[id]/+server.ts': { params: { id: 'cycle_run' } },
	'/api/runs/[id]/leak-tests/+server.ts': { params: { id: 'cycle_run' }, base: { POST: () => ({ fromS: 0, toS: 1800 }) } },
	'/api/runs/[id]/series/+server.ts': { params: { id: 'cycle_run' } }
};
