import { error } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { hasPermission } from '$lib/domain/permissions';
import { applyEquipmentChange, getEquipment, listEquipmentEvents, listInstruments, type EquipmentChange } from '$lib/server/equipment/registry';
import { equipmentFailure } from '$lib/server/equipment/http';
import { checkEquipmentUsableById, siteToday } from '$lib/server/equipment/usable';
import { listRuns } from '$lib/server/cycles/runs';
import { listMappings } from '$lib/server/cycles/mappings';

export const load = (async (event) => {
	const user = requirePermission(event, 'equipment.read');
	const item = await getEquipment(database.db, event.params.id);
	if (!item) error(404, { message: 'No such equipment.' });
	const [instruments, events, usability] = await Promise.all([
		listInstruments(database.db, item.id),
		listEquipmentEvents(database.db, item.id),
		checkEquipmentUsableById(database.db, item.id)
	]);
	const lyophilizer = item.class === 'lyophilizer';
	const canReadCycles = hasPermission(user.roles, 'cycle.read');
	return {
		today: siteToday(),
		item: { id: item.id, code: item.code, name: item.name, class: item.class, location: item.location, status: item.status, calibratedOn: item.calibratedOn, calibrationDueOn: item.calibrationDueOn, properties: item.properties as Record<string, unknown> },
		instruments: instruments.map(({ id, tag, name, role, unit, status, calibratedOn, calibrationDueOn }) => ({ id, tag, name, role, unit, status, calibratedOn, calibrationDueOn })),
		events: events.map((e) => ({ id: e.id, instrumentId: e.instrumentId, kind: e.kind, fromStatus: e.fromStatus, toStatus: e.toStatus, calibratedOn: e.calibratedOn, calibrationDueOn: e.calibrationDueOn, reference: e.reference, reason: e.reason, actorName: e.actorName, at: e.at.toISOString() })),
		usability: usability ? { usable: usability.usable, problems: usability.problems } : null,
		runs: lyophilizer && canReadCycles ? await listRuns(database.db, { equipmentId: item.id }, 20) : [],
		mappings: lyophilizer && canReadCycles ? (await listMappings(database.db, item.id)).map(({ id, name, updatedAt }) => ({ id, name, updatedAt })) : [],
		canManage: hasPermission(user.roles, 'equipment.manage')
	};
}) satisfies PageServerLoad;

type Form = Record<string, string>;

/**
 * Parses the form, applies one registry change: 404 or 400 with `{ code, message }` for an expected
 * refusal, the message from the catalogue in the person's language (the English stays in the error).
 */
async function act(event: Parameters<Actions[string]>[0], changeOf: (form: Form) => EquipmentChange) {
	const user = requirePermission(event, 'equipment.manage');
	const form = Object.fromEntries([...(await event.request.formData()).entries()].map(([k, v]) => [k, String(v)])) as Form;
	try {
		await applyEquipmentChange(database.db, { id: user.id, name: user.name }, event.params.id, changeOf(form));
		return { saved: true };
	} catch (e) {
		return equipmentFailure(e, event.locals.locale);
	}
}

const target = (form: Form) => (form.target && form.target !== 'equipment' ? form.target : null);

export const actions = {
	status: (event) => act(event, (f) => ({ kind: 'status', instrumentId: target(f), input: { status: f.status as never, reason: f.reason } })),
	calibrate: (event) =>
		act(event, (f) => ({ kind: 'calibration', instrumentId: target(f), input: { calibratedOn: f.calibratedOn, calibrationDueOn: f.calibrationDueOn, reference: f.reference, reason: f.reason } })),
	addInstrument: (event) =>
		act(event, (f) => ({
			kind: 'instrument',
			input: { tag: f.tag, name: f.name, role: f.role as never, calibratedOn: f.calibratedOn || null, calibrationDueOn: f.calibrationDueOn || null, reason: f.reason }
		}))
} satisfies Actions;
