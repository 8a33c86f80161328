/**
 * E-mail notifications (issue 8). Services call `queueNotification(uow, n)` inside their unit of
 * work: it writes outbox rows in that transaction (nothing lost, never blocks nor rolls back the
 * action). The background sender (sender.ts, started by ensureMailSender in hooks.server.ts)
 * delivers them later with retries.
 */
export { queueNotification, type Notification } from './outbox';
export type { NotificationKind } from '../db/tables/mail';
export { notificationKind } from '../db/tables/mail';
export { ensureMailSender, stopMailSender } from './runtime';
