/**
 * The database of Escapement. Everything is per lab: schemes, their revisions, audits, reviews and the activity log.
 * Users, accounts, sessions and verification tokens follow the shape that Auth.js's Drizzle adapter expects.
 * Signed audits, their signatures and the activity log are protected against UPDATE and DELETE by triggers
 * (see the hand-written migration in drizzle/).
 */
import {
	pgTable,
	pgEnum,
	text,
	timestamp,
	integer,
	primaryKey,
	uuid,
	jsonb,
	bigserial,
	boolean,
	customType,
	index,
	uniqueIndex,
	varchar,
	bigint,
	doublePrecision
} from 'drizzle-orm/pg-core';

const bytea = customType<{ data: Uint8Array; driverData: Buffer }>({
	dataType: () => 'bytea',
	toDriver: (value) => Buffer.from(value.buffer, value.byteOffset, value.byteLength),
	fromDriver: (value) => new Uint8Array(value)
});

const created = () => timestamp('created_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow();

// ---------------------------------------------------------------- people and sign-in (Auth.js adapter shape)

export const users = pgTable('users', {
	id: text('id')
		.primaryKey()
		.$defaultFn(() => crypto.randomUUID()),
	name: text('name'),
	email: text('email').notNull().unique(),
	emailVerified: timestamp('email_verified', { mode: 'date' }),
	image: text('image'),
	passwordHash: text('password_hash'),
	createdAt: created()
});

export const accounts = pgTable(
	'accounts',
	{
		userId: text('user_id')
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		type: text('type').notNull(),
		provider: text('provider').notNull(),
		providerAccountId: text('provider_account_id').notNull(),
		refresh_token: text('refresh_token'),
		access_token: text('access_token'),
		expires_at: integer('expires_at'),
		token_type: text('token_type'),
		scope: text('scope'),
		id_token: text('id_token'),
		session_state: text('session_state')
	},
	(t) => [primaryKey({ columns: [t.provider, t.providerAccountId] })]
);

export const sessions = pgTable('sessions', {
	sessionToken: text('session_token').primaryKey(),
	userId: text('user_id')
		.notNull()
		.references(() => users.id, { onDelete: 'cascade' }),
	expires: timestamp('expires', { mode: 'date' }).notNull()
});

export const verificationTokens = pgTable(
	'verification_tokens',
	{
		identifier: text('identifier').notNull(),
		token: text('token').notNull(),
		expires: timestamp('expires', { mode: 'date' }).notNull()
	},
	(t) => [primaryKey({ columns: [t.identifier, t.token] })]
);

export const apiTokens = pgTable(
	'api_tokens',
	{
		id: uuid('id').primaryKey().defaultRandom(),
		userId: text('user_id')
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		name: text('name').notNull(),
		/** SHA-256 of the token, hex; the token itself is shown once and never stored. */
		tokenHash: text('token_hash').notNull().unique(),
		prefix: text('prefix').notNull(),
		createdAt: created(),
		lastUsedAt: timestamp('last_used_at', { withTimezone: true, mode: 'date' }),
		revokedAt: timestamp('revoked_at', { withTimezone: true, mode: 'date' }),
		/** After this moment the token no longer works; null: until revoked. */
		expiresAt: timestamp('expires_at', { withTimezone: true, mode: 'date' })
	},
	(t) => [index('api_tokens_user_idx').on(t.userId)]
);

/**
 * One row per browser sign-in; the session cookie (a signed JWT) names its row, and every request checks it. Sign-out
 * and a password change revoke rows, so a copied cookie stops working; `expiresAt` is fixed at sign-in (no renewal).
 */
export const userSessions = pgTable(
	'user_sessions',
	{
		id: text('id').primaryKey(),
		userId: text('user_id')
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		method: text('method').notNull(),
		createdAt: created(),
		expiresAt: timestamp('expires_at', { withTimezone: true, mode: 'date' }).notNull(),
		revokedAt: timestamp('revoked_at', { withTimezone: true, mode: 'date' })
	},
	(t) => [index('user_sessions_user_idx').on(t.userId)]
);

/** Counters of rate-limiter-flexible's RateLimiterPostgres (failed passwords, link requests): they survive a restart. */
export const rateLimits = pgTable('rate_limits', {
	key: varchar('key', { length: 255 }).primaryKey(),
	points: integer('points').notNull().default(0),
	expire: bigint('expire', { mode: 'number' })
});

// ---------------------------------------------------------------- labs and roles

/** lead: members and roles; modeller: schemes and audits; reviewer: signs audits; reader: reads. */
export const labRole = pgEnum('lab_role', ['lead', 'modeller', 'reviewer', 'reader']);
export type LabRole = (typeof labRole.enumValues)[number];

export const labs = pgTable('labs', {
	id: uuid('id').primaryKey().defaultRandom(),
	slug: text('slug').notNull().unique(),
	name: text('name').notNull(),
	createdAt: created()
});

export const labMembers = pgTable(
	'lab_members',
	{
		labId: uuid('lab_id')
			.notNull()
			.references(() => labs.id, { onDelete: 'cascade' }),
		userId: text('user_id')
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		role: labRole('role').notNull(),
		createdAt: created()
	},
	(t) => [primaryKey({ columns: [t.labId, t.userId] }), index('lab_members_user_idx').on(t.userId)]
);

export const invitations = pgTable(
	'invitations',
	{
		id: uuid('id').primaryKey().defaultRandom(),
		labId: uuid('lab_id')
			.notNull()
			.references(() => labs.id, { onDelete: 'cascade' }),
		email: text('email').notNull(),
		role: labRole('role').notNull(),
		tokenHash: text('token_hash').notNull().unique(),
		invitedBy: text('invited_by')
			.notNull()
			.references(() => users.id),
		createdAt: created(),
		expiresAt: timestamp('expires_at', { withTimezone: true, mode: 'date' }).notNull(),
		acceptedAt: timestamp('accepted_at', { withTimezone: true, mode: 'date' })
	},
	(t) => [index('invitations_lab_idx').on(t.labId)]
);

// ---------------------------------------------------------------- schemes and revisions

export const schemes = pgTable(
	'schemes',
	{
		id: uuid('id').primaryKey().defaultRandom(),
		labId: uuid('lab_id')
			.notNull()
			.references(() => labs.id, { onDelete: 'cascade' }),
		name: text('name').notNull(),
		description: text('description').notNull().default(''),
		createdBy: text('created_by')
			.notNull()
			.references(() => users.id),
		createdAt: created(),
		updatedAt: timestamp('updated_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow()
	},
	(t) => [index('schemes_lab_idx').on(t.labId), uniqueIndex('schemes_lab_name_idx').on(t.labId, t.name)]
);

export const schemeRevisions = pgTable(
	'scheme_revisions',
	{
		id: uuid('id').primaryKey().defaultRandom(),
		schemeId: uuid('scheme_id')
			.notNull()
			.references(() => schemes.id, { onDelete: 'restrict' }),
		number: integer('number').notNull(),
		/** The escapement.scheme/1 document of this revision. */
		scheme: jsonb('scheme').notNull(),
		note: text('note').notNull().default(''),
		sourceFileName: text('source_file_name'),
		sourceSha256: text('source_sha256'),
		sourceBytes: bytea('source_bytes'),
		sourceContentType: text('source_content_type'),
		createdBy: text('created_by')
			.notNull()
			.references(() => users.id),
		createdAt: created()
	},
	(t) => [uniqueIndex('scheme_revisions_number_idx').on(t.schemeId, t.number)]
);

// ---------------------------------------------------------------- audits and review

export const auditStatus = pgEnum('audit_status', ['draft', 'submitted', 'returned', 'signed']);
export type AuditStatus = (typeof auditStatus.enumValues)[number];

export const audits = pgTable(
	'audits',
	{
		id: uuid('id').primaryKey().defaultRandom(),
		labId: uuid('lab_id')
			.notNull()
			.references(() => labs.id, { onDelete: 'restrict' }),
		schemeId: uuid('scheme_id')
			.notNull()
			.references(() => schemes.id, { onDelete: 'restrict' }),
		revisionId: uuid('revision_id')
			.notNull()
			.references(() => schemeRevisions.id, { onDelete: 'restrict' }),
		/** The scheme exactly as audited (revision with the chosen conditions applied). */
		inputs: jsonb('inputs').notNull(),
		/** The escapement.audit/1 document. */
		results: jsonb('results').notNull(),
		engineVersion: text('engine_version').notNull(),
		/** SHA-256 of the canonical JSON of inputs and results. */
		sha256: text('sha256').notNull(),
		/** Summary columns for lists: the worst verdict and counts per verdict. */
		verdict: text('verdict').notNull(),
		verdictCounts: jsonb('verdict_counts').notNull(),
		status: auditStatus('status').notNull().default('draft'),
		createdBy: text('created_by')
			.notNull()
			.references(() => users.id),
		createdAt: created()
	},
	(t) => [index('audits_scheme_idx').on(t.schemeId), index('audits_lab_status_idx').on(t.labId, t.status)]
);

/**
 * What pages and lists read of an audit, stored beside it when it is stored: the results without the per-cycle lists
 * (`cycles`, `cycleAffinitiesKT`, up to 20,000 entries), so that reading a summary never parses the whole result.
 * Derived from the audit row, never changed (stored audits never change).
 */
export const auditSummaries = pgTable('audit_summaries', {
	auditId: uuid('audit_id')
		.primaryKey()
		.references(() => audits.id, { onDelete: 'cascade' }),
	summary: jsonb('summary').notNull(),
	cycleCount: integer('cycle_count').notNull()
});

export const reviewEvents = pgTable(
	'review_events',
	{
		id: bigserial('id', { mode: 'number' }).primaryKey(),
		auditId: uuid('audit_id')
			.notNull()
			.references(() => audits.id, { onDelete: 'restrict' }),
		kind: text('kind', { enum: ['submitted', 'returned', 'signed'] }).notNull(),
		actorId: text('actor_id')
			.notNull()
			.references(() => users.id),
		note: text('note').notNull().default(''),
		createdAt: created()
	},
	(t) => [index('review_events_audit_idx').on(t.auditId)]
);

export const signatures = pgTable('signatures', {
	auditId: uuid('audit_id')
		.primaryKey()
		.references(() => audits.id, { onDelete: 'restrict' }),
	signerId: text('signer_id')
		.notNull()
		.references(() => users.id),
	signerName: text('signer_name').notNull(),
	comment: text('comment').notNull().default(''),
	/** The audit's SHA-256 at the moment of signing. */
	sha256: text('sha256').notNull(),
	signedAt: created(),
	/** The reviewer confirmed signing an audit with violating cycles, with a comment saying why. */
	violationAcknowledged: boolean('violation_acknowledged').notNull().default(false),
	/** The signed record: RFC 8785 canonical JSON of every field shown as part of it (see signing.ts). */
	record: text('record'),
	/** Ed25519 signature (base64) of `record` with the server's key, and that key's fingerprint. */
	recordSignature: text('record_signature'),
	keyFingerprint: text('key_fingerprint')
});

// ---------------------------------------------------------------- activity, mail, exports

export const activityLog = pgTable(
	'activity_log',
	{
		id: bigserial('id', { mode: 'number' }).primaryKey(),
		labId: uuid('lab_id').references(() => labs.id, { onDelete: 'cascade' }),
		actorId: text('actor_id').references(() => users.id, { onDelete: 'set null' }),
		kind: text('kind').notNull(),
		summary: text('summary').notNull(),
		details: jsonb('details').notNull().default({}),
		createdAt: created()
	},
	(t) => [index('activity_log_lab_idx').on(t.labId, t.createdAt)]
);

/** Messages caught by the local SMTP sink (development and tests). */
export const caughtMail = pgTable(
	'caught_mail',
	{
		id: bigserial('id', { mode: 'number' }).primaryKey(),
		envelopeFrom: text('envelope_from').notNull(),
		envelopeTo: text('envelope_to').array().notNull(),
		subject: text('subject').notNull().default(''),
		textBody: text('text_body').notNull().default(''),
		raw: text('raw').notNull(),
		receivedAt: timestamp('received_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow(),
		seen: boolean('seen').notNull().default(false)
	},
	(t) => [index('caught_mail_received_idx').on(t.receivedAt)]
);

// ---------------------------------------------------------------- engine jobs (long work, run by worker processes)

export const engineJobStatus = pgEnum('engine_job_status', ['queued', 'running', 'done', 'failed', 'cancelled']);

/**
 * Engine work past the request's work budget: an audit to store, a long sweep. The row is the job as people see it
 * (progress, stage, outcome); pg-boss carries the delivery (retries, expiry of a dead worker's job). Its input is
 * plain data (ids and options); the outcome is an audit id or a cached result. A job finishes once: the handler
 * writes its outcome and `done` in one transaction, and only while the row is not finished yet.
 */
export const engineJobs = pgTable(
	'engine_jobs',
	{
		id: uuid('id').primaryKey().defaultRandom(),
		kind: text('kind').notNull(),
		labId: uuid('lab_id')
			.notNull()
			.references(() => labs.id, { onDelete: 'restrict' }),
		schemeId: uuid('scheme_id').references(() => schemes.id, { onDelete: 'restrict' }),
		input: jsonb('input').notNull(),
		/** SHA-256 of the canonical inputs, options and engine version: equal keys give equal results. */
		cacheKey: text('cache_key').notNull(),
		status: engineJobStatus('status').notNull().default('queued'),
		progress: doublePrecision('progress').notNull().default(0),
		stage: text('stage').notNull().default('waiting for a worker'),
		error: text('error'),
		attempts: integer('attempts').notNull().default(0),
		/** host:pid of the worker process that took the job last */
		workedBy: text('worked_by'),
		auditId: uuid('audit_id').references(() => audits.id, { onDelete: 'restrict' }),
		createdBy: text('created_by')
			.notNull()
			.references(() => users.id),
		createdAt: created(),
		updatedAt: timestamp('updated_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow(),
		finishedAt: timestamp('finished_at', { withTimezone: true, mode: 'date' })
	},
	(t) => [index('engine_jobs_lab_scheme_idx').on(t.labId, t.schemeId, t.createdAt), index('engine_jobs_key_idx').on(t.cacheKey)]
);

/** Results of engine work kept by their cache key (stored once; a job with the same key reuses them). */
export const engineResults = pgTable('engine_results', {
	cacheKey: text('cache_key').primaryKey(),
	kind: text('kind').notNull(),
	engineVersion: text('engine_version').notNull(),
	result: jsonb('result').notNull(),
	createdAt: created()
});
