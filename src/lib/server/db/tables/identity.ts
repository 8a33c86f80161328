import { sql } from 'drizzle-orm';
import {
	pgTable,
	text,
	timestamp,
	boolean,
	integer,
	primaryKey,
	index,
	uniqueIndex,
	jsonb
} from 'drizzle-orm/pg-core';

/**
 * People and service accounts. Never deleted (a username is never reused: 21 CFR 11.100(a),
 * 11.300(a)); disabling keeps the row and its history.
 */
export const user = pgTable(
	'user',
	{
		id: text('id').primaryKey(),
		/** Lower-case sign-in name, unique for ever. */
		username: text('username').notNull(),
		/** The printed name shown in signature manifestations (11.50(a)(1)). */
		name: text('name').notNull(),
		email: text('email'),
		kind: text('kind', { enum: ['person', 'service'] }).notNull().default('person'),
		passwordHash: text('password_hash'),
		passwordChangedAt: timestamp('password_changed_at', { withTimezone: true }),
		mustChangePassword: boolean('must_change_password').notNull().default(false),
		disabledAt: timestamp('disabled_at', { withTimezone: true }),
		lockedUntil: timestamp('locked_until', { withTimezone: true }),
		/** Failures before this instant no longer count toward the lockout (set by an admin's unlock). */
		lockoutClearedAt: timestamp('lockout_cleared_at', { withTimezone: true }),
		locale: text('locale').notNull().default('en'),
		preferences: jsonb('preferences').notNull().default(sql`'{}'::jsonb`),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [uniqueIndex('user_username_key').on(t.username)]
);

export const role = ['author', 'operator', 'supervisor', 'qa', 'inspector', 'admin'] as const;
export type Role = (typeof role)[number];

/** Role grants; every grant and removal is audited (Annex 11, 12.3). */
export const userRole = pgTable(
	'user_role',
	{
		userId: text('user_id')
			.notNull()
			.references(() => user.id),
		role: text('role', { enum: role }).notNull(),
		grantedAt: timestamp('granted_at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [primaryKey({ columns: [t.userId, t.role] })]
);

/** Sessions (Lucia). The id stored here is the SHA-256 of the cookie token, never the token. */
export const session = pgTable(
	'session',
	{
		id: text('id').primaryKey(),
		userId: text('user_id')
			.notNull()
			.references(() => user.id),
		expiresAt: timestamp('expires_at', { withTimezone: true, mode: 'date' }).notNull(),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
		lastSeenAt: timestamp('last_seen_at', { withTimezone: true }).notNull().defaultNow(),
		/** When this continuous session's first signing (ID + password) happened: 11.200(a)(1)(i). */
		firstSignedAt: timestamp('first_signed_at', { withTimezone: true }),
		/** How the session was opened, for the audit trail and the profile page. */
		method: text('method', { enum: ['password', 'passkey'] }).notNull().default('password')
	},
	(t) => [index('session_user_idx').on(t.userId)]
);

/** Sign-in attempts, for the lockout rule and per-address rate limiting (11.300(d)). */
export const signInAttempt = pgTable(
	'sign_in_attempt',
	{
		id: text('id').primaryKey(),
		username: text('username').notNull(),
		address: text('address').notNull(),
		succeeded: boolean('succeeded').notNull(),
		/** What was attempted: sign-in with a password or passkey, or the password step of a signing. */
		kind: text('kind', { enum: ['password', 'passkey', 'signing'] }).notNull().default('password'),
		/** failed, locked (refused while locked), rate-limited, disabled, succeeded. */
		outcome: text('outcome').notNull().default('failed'),
		/** Set on the failure that locked the name: unknown names lock like real ones (no user enumeration). */
		locksUntil: timestamp('locks_until', { withTimezone: true }),
		at: timestamp('at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [index('sign_in_attempt_username_idx').on(t.username, t.at), index('sign_in_attempt_address_idx').on(t.address, t.at)]
);

/** WebAuthn credentials (passkeys) with user verification. */
export const passkey = pgTable(
	'passkey',
	{
		id: text('id').primaryKey(),
		userId: text('user_id')
			.notNull()
			.references(() => user.id),
		publicKey: text('public_key').notNull(),
		counter: integer('counter').notNull().default(0),
		transports: jsonb('transports').notNull().default(sql`'[]'::jsonb`),
		label: text('label').notNull(),
		/** Whether the authenticator reported a synced (backed-up) credential. */
		backedUp: boolean('backed_up').notNull().default(false),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
		lastUsedAt: timestamp('last_used_at', { withTimezone: true }),
		removedAt: timestamp('removed_at', { withTimezone: true })
	},
	(t) => [index('passkey_user_idx').on(t.userId)]
);

/**
 * A person's signed acknowledgement that their electronic signature is the legally binding
 * equivalent of their handwritten signature (21 CFR 11.100(c), 11.10(j)). `content` is exactly
 * what was shown and hashed; its signature row holds the hash (11.70).
 */
export const acknowledgement = pgTable(
	'acknowledgement',
	{
		id: text('id').primaryKey(),
		userId: text('user_id')
			.notNull()
			.references(() => user.id),
		statementVersion: text('statement_version').notNull(),
		content: jsonb('content').notNull(),
		signatureId: text('signature_id').notNull(),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [index('acknowledgement_user_idx').on(t.userId)]
);

/** WebAuthn challenges: single use, short-lived, bound to their purpose and user. */
export const webauthnChallenge = pgTable('webauthn_challenge', {
	challenge: text('challenge').primaryKey(),
	purpose: text('purpose', { enum: ['register', 'sign-in', 'sign'] }).notNull(),
	userId: text('user_id'),
	sessionId: text('session_id'),
	expiresAt: timestamp('expires_at', { withTimezone: true }).notNull()
});

/** API tokens for service accounts; only the SHA-256 of the token is stored. */
export const apiToken = pgTable(
	'api_token',
	{
		id: text('id').primaryKey(),
		userId: text('user_id')
			.notNull()
			.references(() => user.id),
		tokenHash: text('token_hash').notNull(),
		label: text('label').notNull(),
		permissions: jsonb('permissions').notNull().default(sql`'[]'::jsonb`),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
		expiresAt: timestamp('expires_at', { withTimezone: true }).notNull(),
		revokedAt: timestamp('revoked_at', { withTimezone: true }),
		lastUsedAt: timestamp('last_used_at', { withTimezone: true })
	},
	(t) => [uniqueIndex('api_token_hash_key').on(t.tokenHash)]
);

export type User = typeof user.$inferSelect;
export type Session = typeof session.$inferSelect;
export type Passkey = typeof passkey.$inferSelect;
export type ApiToken = typeof apiToken.$inferSelect;
export type Acknowledgement = typeof acknowledgement.$inferSelect;
