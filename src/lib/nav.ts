import type { Permission } from '$lib/domain/permissions';
import type { Messages } from '$lib/i18n';

/** The areas of the shell (design.md, "Look and words"), each shown to the roles that may open it. */
export interface Area {
	key: keyof Messages['shell']['areas'];
	href: string;
	permission: Permission;
}

// An area is listed here once its pages exist.
export const areas: Area[] = [{ key: 'today', href: '/', permission: 'today.view' }, { key: 'masters', href: '/masters', permission: 'master.read' }, { key: 'batches', href: '/batches', permission: 'batch.read' }, { key: 'cycles', href: '/cycles', permission: 'cycle.read' }, { key: 'deviations', href: '/deviations', permission: 'deviation.read' }, { key: 'review', href: '/review', permission: 'review.perform' }, { key: 'audit', href: '/audit', permission: 'audit.read' }, { key: 'equipment', href: '/equipment', permission: 'equipment.read' }, { key: 'people', href: '/people', permission: 'user.read' }, { key: 'settings', href: '/settings/execution', permission: 'settings.manage' }, { key: 'backup', href: '/admin/backup', permission: 'settings.manage' }];
