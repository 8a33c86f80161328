import { boolean, index, integer, pgTable, primaryKey, text, timestamp } from 'drizzle-orm/pg-core';
import { user } from './identity';

/** What a notification is about; each person chooses which of these they receive. */
export const notificationKind = [
	'verification-requested',
	'deviation-raised',
	'deviation-awaiting-approval',
	'batch-ready-for-review',
	'batch-disposed',
	'account-locked'
] as const;
export type NotificationKind = (typeof notificationKind)[number];

export const outboxStatus = ['pending', 'sent', 'failed'] as const;
export type OutboxStatus = (typeof outboxStatus)[number];

/**
 * The mail outbox (transactional outbox): one row per recipient, written in the same transaction
 * as the GMP action that causes it, so a notification commits with its action or not at all, and a
 * mail server that is down only delays it (issue 8, "Bad input": never blocks or loses the GMP action).
 * A background sender claims rows (claimed_until is a lease; FOR UPDATE SKIP LOCKED picks them) and
 * delivers them with retries. Not GMP data: mail is a courtesy, the record is the database.
 */
export const mailOutbox = pgTable(
	'mail_outbox',
	{
		id: text('id').primaryKey(),
		kind: text('kind', { enum: notificationKind }).notNull(),
		// No foreign keys on the subject: the outbox must never make the GMP action fail.
		batchId: text('batch_id'),
		deviationId: text('deviation_id'),
		recipientUserId: text('recipient_user_id')
			.notNull()
			.references(() => user.id),
		toAddress: text('to_address').notNull(),
		subject: text('subject').notNull(),
		body: text('body').notNull(),
		status: text('status', { enum: outboxStatus }).notNull().default('pending'),
		attempts: integer('attempts').notNull().default(0),
		nextAttemptAt: timestamp('next_attempt_at', { withTimezone: true, mode: 'string' }).notNull().defaultNow(),
		/** The lease of the sender that claimed the row; another sender skips it until then. */
		claimedUntil: timestamp('claimed_until', { withTimezone: true, mode: 'string' }),
		/** Which claim holds the lease: a sender whose lease ran out cannot mark the row. */
		claimToken: text('claim_token'),
		lastError: text('last_error'),
		messageId: text('message_id'),
		createdAt: timestamp('created_at', { withTimezone: true, mode: 'string' }).notNull().defaultNow(),
		sentAt: timestamp('sent_at', { withTimezone: true, mode: 'string' })
	},
	(t) => [index('mail_outbox_due_idx').on(t.status, t.nextAttemptAt), index('mail_outbox_recipient_idx').on(t.recipientUserId)]
);

/** A person's choice per kind; no row means the default (on). */
export const notificationPreference = pgTable(
	'notification_preference',
	{
		userId: text('user_id')
			.notNull()
			.references(() => user.id),
		kind: text('kind', { enum: notificationKind }).notNull(),
		enabled: boolean('enabled').notNull(),
		updatedAt: timestamp('updated_at', { withTimezone: true, mode: 'string' }).notNull().defaultNow()
	},
	(t) => [primaryKey({ columns: [t.userId, t.kind] })]
);

export type MailOutboxRow = typeof mailOutbox.$inferSelect;
