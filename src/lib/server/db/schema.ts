// Drizzle tables for MariaDB. Singular snake_case table names; every foreign key declared (revision.parent_revision_id and revision.latest_check_id too), so that
// a failed transaction can never leave a revision without its file, check or audit row.
import { sql } from 'drizzle-orm';
import {
	type AnyMySqlColumn,
	boolean,
	datetime,
	double,
	index,
	int,
	json,
	longtext,
	mysqlTable,
	primaryKey,
	text,
	uniqueIndex,
	varchar,
	bigint,
	mysqlEnum
} from 'drizzle-orm/mysql-core';

export const ROLES = ['admin', 'engineer', 'designer', 'reviewer'] as const;
export type Role = (typeof ROLES)[number];

// Triage states of a revision: defined with the events between them in the pure table.
import { REVISION_STATES, type RevisionState } from '../../revision-states';
export { REVISION_STATES, type RevisionState };

const now = () => sql`CURRENT_TIMESTAMP(3)`;
const createdAt = () => datetime('created_at', { mode: 'date', fsp: 3 }).notNull().default(now());

export const team = mysqlTable('team', {
	id: int('id').autoincrement().primaryKey(),
	name: varchar('name', { length: 120 }).notNull(),
	createdAt: createdAt()
});

export const user = mysqlTable(
	'user',
	{
		id: varchar('id', { length: 32 }).primaryKey(),
		email: varchar('email', { length: 254 }).notNull(),
		name: varchar('name', { length: 120 }).notNull(),
		teamId: int('team_id')
			.notNull()
			.references(() => team.id),
		/** argon2id; null until an invited user sets a password. */
		passwordHash: varchar('password_hash', { length: 255 }),
		disabled: boolean('disabled').notNull().default(false),
		createdAt: createdAt()
	},
	(t) => [uniqueIndex('user_email_unique').on(t.email)]
);

export const userRole = mysqlTable(
	'user_role',
	{
		userId: varchar('user_id', { length: 32 })
			.notNull()
			.references(() => user.id, { onDelete: 'cascade' }),
		role: mysqlEnum('role', ROLES).notNull()
	},
	(t) => [primaryKey({ columns: [t.userId, t.role] })]
);

export const session = mysqlTable('session', {
	id: varchar('id', { length: 255 }).primaryKey(),
	userId: varchar('user_id', { length: 32 })
		.notNull()
		.references(() => user.id, { onDelete: 'cascade' }),
	expiresAt: datetime('expires_at').notNull()
});

/** Failed sign-ins, for the per-account and per-address limits. Old rows are pruned on write. */
export const signInFailure = mysqlTable(
	'sign_in_failure',
	{
		id: int('id').autoincrement().primaryKey(),
		email: varchar('email', { length: 254 }).notNull(),
		address: varchar('address', { length: 64 }).notNull(),
		at: datetime('at', { mode: 'date', fsp: 3 }).notNull().default(now())
	},
	(t) => [index('sign_in_failure_email').on(t.email, t.at), index('sign_in_failure_address').on(t.address, t.at)]
);

/** One-time links for invitations and password resets; only the sha256 of the token is stored. */
export const userToken = mysqlTable('user_token', {
	tokenHash: varchar('token_hash', { length: 64 }).primaryKey(),
	userId: varchar('user_id', { length: 32 })
		.notNull()
		.references(() => user.id, { onDelete: 'cascade' }),
	kind: mysqlEnum('kind', ['invite', 'reset']).notNull(),
	expiresAt: datetime('expires_at').notNull(),
	usedAt: datetime('used_at'),
	createdAt: createdAt()
});

/** Bearer tokens for generator pipelines; only the sha256 is stored, the prefix helps people tell them apart. */
export const apiToken = mysqlTable(
	'api_token',
	{
		id: int('id').autoincrement().primaryKey(),
		userId: varchar('user_id', { length: 32 })
			.notNull()
			.references(() => user.id, { onDelete: 'cascade' }),
		name: varchar('name', { length: 80 }).notNull(),
		prefix: varchar('prefix', { length: 12 }).notNull(),
		tokenHash: varchar('token_hash', { length: 64 }).notNull(),
		createdAt: createdAt(),
		lastUsedAt: datetime('last_used_at'),
		revokedAt: datetime('revoked_at'),
		/** After this the token is refused; null = never expires (tokens made before expiry existed). */
		expiresAt: datetime('expires_at')
	},
	(t) => [uniqueIndex('api_token_hash').on(t.tokenHash)]
);

export const mailOutbox = mysqlTable(
	'mail_outbox',
	{
		id: int('id').autoincrement().primaryKey(),
		toAddress: varchar('to_address', { length: 254 }).notNull(),
		subject: varchar('subject', { length: 300 }).notNull(),
		textBody: text('text_body').notNull(),
		htmlBody: text('html_body'),
		status: mysqlEnum('status', ['pending', 'sent', 'failed']).notNull().default('pending'),
		attempts: int('attempts').notNull().default(0),
		lastError: varchar('last_error', { length: 500 }),
		createdAt: createdAt(),
		sentAt: datetime('sent_at')
	},
	(t) => [index('mail_outbox_status').on(t.status, t.id)]
);

export const project = mysqlTable(
	'project',
	{
		id: int('id').autoincrement().primaryKey(),
		teamId: int('team_id')
			.notNull()
			.references(() => team.id),
		slug: varchar('slug', { length: 64 }).notNull(),
		name: varchar('name', { length: 120 }).notNull(),
		description: text('description'),
		units: mysqlEnum('units', ['mm', 'm', 'in']).notNull().default('mm'),
		flowX: double('flow_x').notNull().default(1),
		flowY: double('flow_y').notNull().default(0),
		flowZ: double('flow_z').notNull().default(0),
		/** Target solver cell size in the project's units. */
		targetCellSize: double('target_cell_size').notNull().default(1),
		createdAt: createdAt()
	},
	(t) => [uniqueIndex('project_slug').on(t.slug)]
);

/** Versioned gate rules of a project; a change inserts a new version, never updates one. */
export const gateProfile = mysqlTable(
	'gate_profile',
	{
		id: int('id').autoincrement().primaryKey(),
		projectId: int('project_id')
			.notNull()
			.references(() => project.id),
		version: int('version').notNull(),
		rules: json('rules').notNull(),
		createdBy: varchar('created_by', { length: 32 }).references(() => user.id),
		createdAt: createdAt()
	},
	(t) => [uniqueIndex('gate_profile_version').on(t.projectId, t.version)]
);

export const part = mysqlTable(
	'part',
	{
		id: int('id').autoincrement().primaryKey(),
		projectId: int('project_id')
			.notNull()
			.references(() => project.id),
		slug: varchar('slug', { length: 64 }).notNull(),
		name: varchar('name', { length: 120 }).notNull(),
		/**
		 * The part's newest revision (highest number), set in the transaction that inserts it. The queue
		 * shows only these by default: an older revision is superseded by it and leaves "Needs action".
		 */
		latestRevisionId: int('latest_revision_id').references((): AnyMySqlColumn => revision.id),
		/**
		 * That revision's status, written with it by applyEvent (the one status writer) and by ingest
		 * when a new revision becomes the newest. The queue counts and pages the newest revisions
		 * from the indexes below alone, without a join per part.
		 */
		latestStatus: mysqlEnum('latest_status', REVISION_STATES),
		createdAt: createdAt()
	},
	(t) => [
		uniqueIndex('part_slug').on(t.projectId, t.slug),
		// The queue over newest revisions (queue-view.ts): counts by state per project; pages in
		// revision order, of all states or of one, each an ordered scan of an index that covers it.
		index('part_latest_count').on(t.projectId, t.latestStatus, t.latestRevisionId),
		index('part_latest_order').on(t.latestRevisionId, t.latestStatus, t.projectId),
		index('part_latest_state_order').on(t.latestStatus, t.latestRevisionId, t.projectId)
	]
);

/**
 * A generator run: a named batch of uploads from one optimiser or network run. `samples`: each file is
 * a part of its own (samples of a family); `iterations`: each file is the next revision of one part,
 * in iteration order (iterations of one design). The name is unique in the project, so a pipeline
 * can name the run on every request and the first request creates it.
 */
export const RUN_KINDS = ['samples', 'iterations'] as const;
export type RunKind = (typeof RUN_KINDS)[number];
export const run = mysqlTable(
	'run',
	{
		id: int('id').autoincrement().primaryKey(),
		projectId: int('project_id')
			.notNull()
			.references(() => project.id),
		name: varchar('name', { length: 120 }).notNull(),
		kind: mysqlEnum('kind', RUN_KINDS).notNull().default('samples'),
		createdBy: varchar('created_by', { length: 32 })
			.notNull()
			.references(() => user.id),
		/** The newest revision id the last digest mail covered; the next digest covers the ones after it. */
		digestThroughRevisionId: int('digest_through_revision_id'),
		/**
		 * The newest check_run of the run's revisions the last digest covered: a re-check of a revision the
		 * digest already covered makes a newer check_run (not a revision), and the next digest reports it.
		 */
		digestThroughCheckRunId: int('digest_through_check_run_id'),
		createdAt: createdAt()
	},
	(t) => [uniqueIndex('run_name').on(t.projectId, t.name)]
);

/** Content-addressed stored bytes; one row per distinct sha256 whatever the backend. */
export const storedFile = mysqlTable('stored_file', {
	sha256: varchar('sha256', { length: 64 }).primaryKey(),
	size: bigint('size', { mode: 'number' }).notNull(),
	backend: mysqlEnum('backend', ['local', 's3']).notNull(),
	createdAt: createdAt()
});

export const revision = mysqlTable(
	'revision',
	{
		id: int('id').autoincrement().primaryKey(),
		partId: int('part_id')
			.notNull()
			.references(() => part.id),
		/** 1, 2, 3 … within the part. */
		number: int('number').notNull(),
		sha256: varchar('sha256', { length: 64 })
			.notNull()
			.references(() => storedFile.sha256),
		size: bigint('size', { mode: 'number' }).notNull(),
		format: varchar('format', { length: 16 }).notNull(),
		fileName: varchar('file_name', { length: 255 }).notNull(),
		uploaderId: varchar('uploader_id', { length: 32 })
			.notNull()
			.references(() => user.id),
		source: mysqlEnum('source', ['upload', 'api', 'repair']).notNull(),
		parentRevisionId: int('parent_revision_id').references((): AnyMySqlColumn => revision.id),
		/** Repair recipe that produced this revision (source = repair). */
		recipe: json('recipe'),
		repairLog: json('repair_log'),
		note: varchar('note', { length: 500 }),
		/** The generator run the file came in with, its iteration number there, and the generator's own per-file metadata. */
		runId: int('run_id').references((): AnyMySqlColumn => run.id),
		iteration: int('iteration'),
		meta: json('meta'),
		/**
		 * A repair's largest surface move from its original (repair_log.measures.deviation, model units),
		 * copied out of the log when the repair is stored so the queue can show and sort on it without
		 * reading the log; null for uploads.
		 */
		deviation: double('deviation'),
		status: mysqlEnum('status', REVISION_STATES).notNull().default('awaiting-check'),
		statusReason: varchar('status_reason', { length: 1000 }),
		assigneeId: varchar('assignee_id', { length: 32 }).references(() => user.id),
		/** The newest check_run of this revision, set in the transaction that inserts it; the queue joins on it. */
		latestCheckId: int('latest_check_id').references((): AnyMySqlColumn => checkRun.id),
		createdAt: createdAt(),
		updatedAt: datetime('updated_at', { mode: 'date', fsp: 3 }).notNull().default(now())
	},
	(t) => [
		uniqueIndex('revision_number').on(t.partId, t.number),
		index('revision_status').on(t.status, t.createdAt),
		index('revision_assignee').on(t.assigneeId),
		index('revision_sha').on(t.partId, t.sha256),
		index('revision_run').on(t.runId, t.id),
		// The run digest's probe for checks no digest covered yet (run-digest.ts).
		index('revision_run_check').on(t.runId, t.latestCheckId),
		// Covering for the queue's counts over every revision of the team's parts.
		index('revision_part_status').on(t.partId, t.status),
		// Repair proposals by their deviation, for the queue's deviation sort over all revisions.
		index('revision_status_deviation').on(t.status, t.deviation)
	]
);

export const checkRun = mysqlTable(
	'check_run',
	{
		id: int('id').autoincrement().primaryKey(),
		revisionId: int('revision_id')
			.notNull()
			.references(() => revision.id),
		gateProfileId: int('gate_profile_id')
			.notNull()
			.references(() => gateProfile.id),
		report: longtext('report').notNull(),
		reportSha256: varchar('report_sha256', { length: 64 }).notNull(),
		engineVersion: varchar('engine_version', { length: 32 }).notNull(),
		faces: int('faces').notNull(),
		vertices: int('vertices').notNull(),
		shells: int('shells').notNull(),
		boundaryEdges: int('boundary_edges').notNull(),
		nonManifoldEdges: int('non_manifold_edges').notNull(),
		selfIntersectingPairs: int('self_intersecting_pairs').notNull(),
		genus: int('genus'),
		volume: double('volume').notNull(),
		watertight: boolean('watertight').notNull(),
		/** Number of failed rules weighted by their severity; the queue sorts on it. */
		severity: int('severity').notNull(),
		/** Comma-separated failed rule ids, e.g. ",closed,min-edge-length," for LIKE filters. */
		failedRules: varchar('failed_rules', { length: 300 }).notNull(),
		/**
		 * The report's thinnest wall and narrowest gap in target cells, as measured against the
		 * project's cell size at check time (report.cellSizeChecks.*.cells); null when none was found
		 * within range or the check did not measure them. The queue shows, sorts and filters on the
		 * smaller (least() of the two, after the join from revision), which an index on either column
		 * would not serve, so neither has one.
		 */
		thinnestWallCells: double('thinnest_wall_cells'),
		narrowestGapCells: double('narrowest_gap_cells'),
		/**
		 * Measures the run page draws for thousands of revisions at once, copied out of the report so
		 * it never reads the reports: wetted area (null where the volume is undefined), frontal area
		 * along the flow, the shortest edge in target cells at check time, and for an iteration of an
		 * iterations run its Hausdorff and chamfer distance from the previous iteration (which one).
		 */
		wettedArea: double('wetted_area'),
		frontalArea: double('frontal_area'),
		shortestEdgeCells: double('shortest_edge_cells'),
		iterationHausdorff: double('iteration_hausdorff'),
		iterationChamfer: double('iteration_chamfer'),
		previousIteration: int('previous_iteration'),
		durationMs: int('duration_ms').notNull(),
		createdAt: createdAt()
	},
	(t) => [
		index('check_run_revision').on(t.revisionId, t.id),
		index('check_run_severity').on(t.severity),
		// Covers what the queue sorts and filters on, so it never reads the rows: a report of tens
		// of KB is stored inside the row (off-page only above ~8 KB), so each row read is pages of it.
		index('check_run_queue').on(t.id, t.severity, t.failedRules, t.thinnestWallCells, t.narrowestGapCells)
	]
);

export const ruleResult = mysqlTable(
	'rule_result',
	{
		id: int('id').autoincrement().primaryKey(),
		checkRunId: int('check_run_id')
			.notNull()
			.references(() => checkRun.id, { onDelete: 'cascade' }),
		rule: varchar('rule', { length: 40 }).notNull(),
		passed: boolean('passed').notNull(),
		severity: mysqlEnum('severity', ['blocking', 'warning', 'info']).notNull(),
		measured: varchar('measured', { length: 120 }).notNull(),
		limitText: varchar('limit_text', { length: 120 }).notNull(),
		/** Plain words for designers: what it means for the solver, where, what to change upstream. */
		explanation: text('explanation').notNull(),
		location: json('location')
	},
	(t) => [index('rule_result_run').on(t.checkRunId), index('rule_result_failed').on(t.rule, t.passed)]
);

export const comment = mysqlTable(
	'comment',
	{
		id: int('id').autoincrement().primaryKey(),
		revisionId: int('revision_id')
			.notNull()
			.references(() => revision.id),
		authorId: varchar('author_id', { length: 32 })
			.notNull()
			.references(() => user.id),
		body: text('body').notNull(),
		pointX: double('point_x'),
		pointY: double('point_y'),
		pointZ: double('point_z'),
		face: int('face'),
		createdAt: createdAt()
	},
	(t) => [index('comment_revision').on(t.revisionId, t.id)]
);

/** A sign-off or a return; immutable once written. */
export const decision = mysqlTable(
	'decision',
	{
		id: int('id').autoincrement().primaryKey(),
		revisionId: int('revision_id')
			.notNull()
			.references(() => revision.id),
		kind: mysqlEnum('kind', ['sign-off', 'return']).notNull(),
		byId: varchar('by_id', { length: 32 })
			.notNull()
			.references(() => user.id),
		reason: text('reason'),
		fileSha256: varchar('file_sha256', { length: 64 }).notNull(),
		reportSha256: varchar('report_sha256', { length: 64 }),
		gateProfileId: int('gate_profile_id').references(() => gateProfile.id),
		gateProfileVersion: int('gate_profile_version'),
		/** A sign-off of a repair outside its limits: the reviewer's reason for overriding them. */
		overrideReason: text('override_reason'),
		createdAt: createdAt()
	},
	(t) => [index('decision_revision').on(t.revisionId)]
);

export const auditEvent = mysqlTable(
	'audit_event',
	{
		id: int('id').autoincrement().primaryKey(),
		at: datetime('at', { mode: 'date', fsp: 3 }).notNull().default(now()),
		actorId: varchar('actor_id', { length: 32 }).references(() => user.id),
		entity: varchar('entity', { length: 32 }).notNull(),
		entityId: varchar('entity_id', { length: 64 }).notNull(),
		action: varchar('action', { length: 48 }).notNull(),
		fromState: varchar('from_state', { length: 32 }),
		toState: varchar('to_state', { length: 32 }),
		detail: json('detail')
	},
	(t) => [index('audit_entity').on(t.entity, t.entityId, t.id)]
);

/** Background work claimed with SELECT … FOR UPDATE SKIP LOCKED and held by a heartbeat lease. */
export const job = mysqlTable(
	'job',
	{
		id: int('id').autoincrement().primaryKey(),
		kind: mysqlEnum('kind', ['check', 'repair']).notNull(),
		revisionId: int('revision_id')
			.notNull()
			.references(() => revision.id),
		payload: json('payload'),
		status: mysqlEnum('status', ['queued', 'running', 'done', 'failed']).notNull().default('queued'),
		attempts: int('attempts').notNull().default(0),
		maxAttempts: int('max_attempts').notNull().default(3),
		workerId: varchar('worker_id', { length: 64 }),
		leaseUntil: datetime('lease_until', { mode: 'date', fsp: 3 }),
		heartbeatAt: datetime('heartbeat_at', { mode: 'date', fsp: 3 }),
		stage: varchar('stage', { length: 40 }),
		percent: int('percent').notNull().default(0),
		lastError: varchar('last_error', { length: 1000 }),
		createdAt: createdAt(),
		finishedAt: datetime('finished_at', { mode: 'date', fsp: 3 })
	},
	(t) => [index('job_claim').on(t.status, t.leaseUntil, t.id), index('job_revision').on(t.revisionId)]
);

/** A saved repair recipe: an ordered list of operations with their parameters. */
export const recipe = mysqlTable('recipe', {
	id: int('id').autoincrement().primaryKey(),
	projectId: int('project_id')
		.notNull()
		.references(() => project.id),
	name: varchar('name', { length: 120 }).notNull(),
	steps: json('steps').notNull(),
	createdBy: varchar('created_by', { length: 32 }).references(() => user.id),
	createdAt: createdAt()
});
