import {
	datetime,
	index,
	json,
	mysqlEnum,
	mysqlTable,
	text,
	timestamp,
	uniqueIndex,
	varchar,
	char,
	int,
	bigint
} from 'drizzle-orm/mysql-core';
import { id, ref } from './columns';

import { ROLES } from '../../../roles';

/** The four roles (`$lib/roles`, the one place that names them); one user has one role. */
export { ROLES, type Role } from '../../../roles';


export const users = mysqlTable(
	'users',
	{
		id: id(),
		email: varchar('email', { length: 254 }).notNull(),
		name: varchar('name', { length: 120 }).notNull(),
		role: mysqlEnum('role', ROLES).notNull(),
		/** Argon2id hash; null until the invite is accepted. */
		passwordHash: varchar('password_hash', { length: 255 }),
		status: mysqlEnum('status', ['active', 'disabled']).notNull().default('active'),
		/**
		 * Two-step sign-in (TOTP, RFC 6238): the shared secret, encrypted with AES-256-GCM under a key
		 * derived from AUTH_PEPPER (auth/totp.ts; base64url of iv, tag and ciphertext). Null when off.
		 */
		totpSecret: varchar('totp_secret', { length: 255 }),
		/** When two-step sign-in was turned on; null = off. */
		totpEnabledAt: datetime('totp_enabled_at'),
		/** The time step (unix seconds / 30) of the last accepted code: that step and older ones are refused (replay). */
		totpLastStep: bigint('totp_last_step', { mode: 'number' }),
		/** A secret shown during set-up and not yet confirmed with a code (encrypted like totp_secret). */
		totpPendingSecret: varchar('totp_pending_secret', { length: 255 }),
		createdAt: timestamp('created_at').notNull().defaultNow(),
		updatedAt: timestamp('updated_at').notNull().defaultNow().onUpdateNow()
	},
	(t) => [uniqueIndex('users_email_uq').on(t.email)]
);

/**
 * lucia sessions: the id is the SHA-256 (hex) of the random id in the cookie (auth/sessions.ts), never
 * the cookie's id itself; expires_at a datetime as lucia 3 expects.
 */
export const sessions = mysqlTable(
	'sessions',
	{
		id: char('id', { length: 64 }).primaryKey(),
		userId: ref('user_id')
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		expiresAt: datetime('expires_at').notNull(),
		createdAt: datetime('created_at').notNull().$defaultFn(() => new Date()),
		userAgent: varchar('user_agent', { length: 255 }),
		/** When a two-step sign-in code was given in this session; null until then. */
		secondFactorAt: datetime('second_factor_at')
	},
	(t) => [index('sessions_user_idx').on(t.userId)]
);

/** Personal API tokens: only the SHA-256 of the token is stored. */
export const apiTokens = mysqlTable(
	'api_tokens',
	{
		id: id(),
		userId: ref('user_id')
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		name: varchar('name', { length: 80 }).notNull(),
		tokenHash: char('token_hash', { length: 64 }).notNull(),
		/** First characters of the token, shown in lists so a user can tell tokens apart. */
		prefix: varchar('prefix', { length: 16 }).notNull(),
		createdAt: timestamp('created_at').notNull().defaultNow(),
		lastUsedAt: datetime('last_used_at'),
		expiresAt: datetime('expires_at'),
		revokedAt: datetime('revoked_at')
	},
	(t) => [uniqueIndex('api_tokens_hash_uq').on(t.tokenHash), index('api_tokens_user_idx').on(t.userId)]
);

/** One-time links mailed for an invitation or a password reset; only the SHA-256 is stored. */
export const authLinks = mysqlTable(
	'auth_links',
	{
		id: id(),
		userId: ref('user_id')
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		purpose: mysqlEnum('purpose', ['invite', 'reset']).notNull(),
		tokenHash: char('token_hash', { length: 64 }).notNull(),
		createdAt: timestamp('created_at').notNull().defaultNow(),
		expiresAt: datetime('expires_at').notNull(),
		usedAt: datetime('used_at')
	},
	(t) => [uniqueIndex('auth_links_hash_uq').on(t.tokenHash), index('auth_links_user_idx').on(t.userId)]
);

/** Failed sign-in attempts, kept in the database so that every app instance sees the same count. */
export const signinFailures = mysqlTable(
	'signin_failures',
	{
		id: id(),
		/** 'account:<email>' or 'ip:<address>' */
		bucket: varchar('bucket', { length: 300 }).notNull(),
		at: datetime('at', { fsp: 3 }).notNull()
	},
	(t) => [index('signin_failures_bucket_at_idx').on(t.bucket, t.at)]
);

/** Who changed users, roles, tokens, imports and other sensitive things. */
export const auditEvents = mysqlTable(
	'audit_events',
	{
		id: id(),
		actorId: ref('actor_id'),
		action: varchar('action', { length: 64 }).notNull(),
		targetType: varchar('target_type', { length: 32 }),
		targetId: varchar('target_id', { length: 64 }),
		detail: json('detail'),
		at: timestamp('at').notNull().defaultNow()
	},
	(t) => [index('audit_events_at_idx').on(t.at), index('audit_events_actor_idx').on(t.actorId)]
);

/** Messages captured by the local SMTP catcher (the Outbox). */
export const outboxMessages = mysqlTable(
	'outbox_messages',
	{
		id: id(),
		messageId: varchar('message_id', { length: 255 }),
		fromAddress: varchar('from_address', { length: 320 }).notNull(),
		toAddresses: varchar('to_addresses', { length: 2000 }).notNull(),
		subject: varchar('subject', { length: 500 }).notNull(),
		textBody: text('text_body'),
		htmlBody: text('html_body'),
		sizeBytes: int('size_bytes').notNull(),
		receivedAt: datetime('received_at', { fsp: 3 }).notNull()
	},
	(t) => [index('outbox_received_idx').on(t.receivedAt)]
);

export type User = typeof users.$inferSelect;
export type NewUser = typeof users.$inferInsert;
