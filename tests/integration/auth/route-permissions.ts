import type { Permission } from '$lib/domain/permissions';

/**
 * The specification the role × route test holds the route tree to: for every route module, the
 * permission each exported load, form action and HTTP handler must demand (21 CFR 11.10(d), (g);
 * ASVS V8.2.1). `signed-in` means any signed-in role. A route file that is not listed here, or an
 * export that is not, fails the test: adding a route means saying who may use it.
 */
export type Requirement = Permission | 'signed-in';

/** Reachable without signing in, on purpose, each with its reason. */
export const publicRoutes: Record<string, string> = {
	'/+layout.server.ts': 'root layout: locale, version and site name for every page, the sign-in page included',
	'/(auth)/login/+page.server.ts': 'the sign-in page itself',
	'/logout/+server.ts': 'sign-out; without a session it only clears the cookie',
	'/api/health/+server.ts': 'liveness for load balancers; reveals no data',
	'/api/auth/passkey/options/+server.ts': 'passkey sign-in, step 1 (before there is a session)',
	'/api/auth/passkey/+server.ts': 'passkey sign-in, step 2 (this is the sign-in)'
};

export const routePermissions: Record<string, Record<string, Requirement>> = {
	'/(app)/+layout.server.ts': { load: 'signed-in' },
	'/(app)/+page.server.ts': { load: 'today.view' },
	'/(app)/profile/+page.server.ts': { load: 'profile.manage', 'actions.acknowledge': 'profile.manage', 'actions.removePasskey': 'profile.manage' },
	'/(app)/people/+page.server.ts': { load: 'user.read' },
	'/(app)/people/new/+page.server.ts': { load: 'user.manage', 'actions.default': 'user.manage' },
	'/(app)/people/[id]/+page.server.ts': {
		load: 'user.read',
		'actions.update': 'user.manage',
		'actions.disable': 'user.manage',
		'actions.enable': 'user.manage',
		'actions.unlock': 'user.manage',
		'actions.resetPassword': 'user.manage',
		'actions.createToken': 'user.manage',
		'actions.revokeToken': 'user.manage'
	},
	'/(auth)/password/+page.server.ts': { load: 'profile.manage', 'actions.default': 'profile.manage' },
	'/api/me/+server.ts': { GET: 'signed-in' },
	'/api/me/passkeys/+server.ts': { GET: 'profile.manage', POST: 'profile.manage' },
	'/api/me/passkeys/options/+server.ts': { POST: 'profile.manage' },
	'/api/me/signing/options/+server.ts': { POST: 'profile.manage' },
	'/api/users/+server.ts': { GET: 'user.read' },
	'/api/users/[id]/+server.ts': { GET: 'user.read' },
	// The audit trail (owned by the audit work; listed here so the route tree stays fully specified).
	'/(app)/audit/+page.server.ts': { load: 'audit.read' },
	'/(app)/audit/verify/+page.server.ts': { load: 'audit.read', 'actions.checkpoint': 'audit.checkpoint' },
	'/api/audit/+server.ts': { GET: 'audit.read' },
	'/api/audit/checkpoints/+server.ts': { GET: 'audit.read' },
	'/api/audit/consistency/+server.ts': { GET: 'audit.read' },
	'/api/audit/export/+server.ts': { GET: 'audit.export' },
	'/api/audit/proof/[seq]/+server.ts': { GET: 'audit.read' },
	'/api/audit/public-key/+server.ts': { GET: 'audit.read' },
	'/api/audit/verify/+server.ts': { GET: 'audit.read' },
	// Batch execution.
	'/(app)/batches/+page.server.ts': { load: 'batch.read' },
	'/(app)/batches/[id]/+page.server.ts': { load: 'batch.read' },
	'/(app)/batches/[id]/steps/[stepKey]/+page.server.ts': { load: 'batch.read', 'actions.enter': 'batch.execute', 'actions.verify': 'batch.verify' },
	'/(app)/preferences/+page.server.ts': { load: 'profile.manage', 'actions.default': 'profile.manage' },
	// E-mail notifications (MAIL): each person's choices, and the development-only mailbox (404 in production).
	'/(app)/preferences/notifications/+page.server.ts': { load: 'profile.manage', 'actions.default': 'profile.manage' },
	'/(app)/dev/mail/+page.server.ts': { load: 'settings.manage' },
	'/api/batches/+server.ts': { GET: 'batch.read', POST: 'batch.issue' },
	'/api/batches/[id]/+server.ts': { GET: 'batch.read' },
	// Printed records (PDF): the executed batch record and the audit-trail report.
	'/api/batches/[id]/record.pdf/+server.ts': { GET: 'batch.read' },
	'/api/audit/report.pdf/+server.ts': { GET: 'audit.export' },
	'/api/batches/[id]/steps/[stepKey]/entries/+server.ts': { POST: 'batch.execute' },
	'/api/batches/[id]/steps/[stepKey]/verify/+server.ts': { POST: 'batch.verify' },
	'/api/batches/[id]/lookup/+server.ts': { GET: 'batch.execute' },
	'/api/batches/[id]/attachments/+server.ts': { POST: 'batch.execute' },
	'/api/batches/[id]/attachments/[attachmentId]/+server.ts': { GET: 'batch.read' },
	// Review by exception and disposition (REV).
	'/(app)/review/+page.server.ts': { load: 'review.perform' },
	'/(app)/review/[id]/+page.server.ts': { load: 'review.perform', 'actions.mark': 'review.perform', 'actions.release': 'batch.release', 'actions.reject': 'batch.release' },
	'/api/batches/[id]/review/+server.ts': { GET: 'review.perform', POST: 'review.perform' },
	'/api/batches/[id]/disposition/+server.ts': { POST: 'batch.release' },
	'/(app)/settings/execution/+page.server.ts': { load: 'settings.manage', 'actions.code': 'settings.manage', 'actions.late': 'settings.manage' },
	// Backup and restore (administrators; issue 9, Annex 11 §7.2).
	'/(app)/admin/backup/+page.server.ts': { load: 'settings.manage', 'actions.create': 'settings.manage', 'actions.verify': 'settings.manage' },
	// Master batch records (owned by the masters work).
	'/(app)/masters/+page.server.ts': { load: 'master.read', 'actions.import': 'master.author' },
	'/(app)/masters/new/+page.server.ts': { load: 'master.author', 'actions.default': 'master.author' },
	'/(app)/masters/[id]/+page.server.ts': {
		load: 'master.read',
		'actions.submit': 'master.author',
		'actions.approve': 'master.approve',
		'actions.return': 'master.return',
		'actions.makeEffective': 'master.approve',
		'actions.retire': 'master.approve',
		'actions.newVersion': 'master.author'
	},
	'/(app)/masters/[id]/edit/+page.server.ts': { load: 'master.author', 'actions.save': 'master.author' },
	'/(app)/masters/[id]/diff/+page.server.ts': { load: 'master.read' },
	'/(app)/masters/[id]/issue/+page.server.ts': { load: 'batch.issue', 'actions.issue': 'batch.issue', 'actions.numbering': 'batch.issue' },
	'/api/masters/+server.ts': { GET: 'master.read', POST: 'master.author' },
	'/api/masters/[id]/+server.ts': { GET: 'master.read' },
	// Freeze-drying cycles (owned by the cycles work).
	'/(app)/equipment/+page.server.ts': { load: 'equipment.read' },
	'/(app)/equipment/[id]/+page.server.ts': { load: 'equipment.read', 'actions.status': 'equipment.manage', 'actions.calibrate': 'equipment.manage', 'actions.addInstrument': 'equipment.manage' },
	'/(app)/cycles/+page.server.ts': { load: 'cycle.read' },
	'/(app)/cycles/import/+page.server.ts': { load: 'cycle.upload' },
	'/(app)/cycles/[id]/+page.server.ts': { load: 'cycle.read', 'actions.leak': 'cycle.upload' },
	'/api/cycles/analyse/+server.ts': { POST: 'cycle.read' },
	'/api/equipment/[id]/mappings/+server.ts': { GET: 'cycle.read', POST: 'cycle.upload' },
	'/api/equipment/[id]/runs/+server.ts': { GET: 'cycle.read', POST: 'cycle.upload' },
	'/api/runs/[id]/+server.ts': { GET: 'cycle.read' },
	'/api/runs/[id]/leak-tests/+server.ts': { GET: 'cycle.read', POST: 'cycle.upload' },
	'/api/runs/[id]/series/+server.ts': { GET: 'cycle.read' },
	// Deviations (owned by the deviations work). Transitions pass deviation.raise at the route; the
	// service then demands deviation.approve for close, send-back and cancel.
	'/(app)/deviations/+page.server.ts': { load: 'deviation.read' },
	'/(app)/deviations/new/+page.server.ts': { load: 'deviation.raise', 'actions.default': 'deviation.raise' },
	'/(app)/deviations/[id]/+page.server.ts': { load: 'deviation.read', 'actions.edit': 'deviation.raise', 'actions.transition': 'deviation.raise' },
	'/api/deviations/+server.ts': { GET: 'deviation.read', POST: 'deviation.raise' },
	'/api/deviations/[id]/+server.ts': { GET: 'deviation.read', PATCH: 'deviation.raise' },
	'/api/deviations/[id]/transitions/+server.ts': { POST: 'deviation.raise' }
};
