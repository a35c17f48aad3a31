import { sql } from "drizzle-orm";
import { blob, index, integer, primaryKey, sqliteTable, text, uniqueIndex } from "drizzle-orm/sqlite-core";

// One schema module for the whole product. Ids are random text ids (see ids.server.ts), so a guessed id
// from another shop never lines up, and every tenant-owned table carries shop_id for the tenancy guard.

const createdAt = () =>
  integer("created_at", { mode: "timestamp_ms" }).notNull().default(sql`(unixepoch('subsec') * 1000)`);

export const users = sqliteTable("users", {
  id: text("id").primaryKey(),
  email: text("email").notNull().unique(),
  name: text("name").notNull(),
  passwordHash: text("password_hash").notNull(),
  createdAt: createdAt(),
});

export const shops = sqliteTable("shops", {
  id: text("id").primaryKey(),
  name: text("name").notNull(),
  currency: text("currency").notNull().default("USD"),
  taxRateBp: integer("tax_rate_bp").notNull().default(0),
  warrantyDays: integer("warranty_days").notNull().default(90),
  retentionDays: integer("retention_days").notNull().default(730),
  /** How long an unclaimed device is kept after the customer is told it is ready, as the intake terms say. */
  unclaimedDays: integer("unclaimed_days").notNull().default(60),
  createdAt: createdAt(),
});

/** The tenant column of every shop-owned table: required, and removed with its shop. */
const ownedByShop = () =>
  text("shop_id")
    .notNull()
    .references(() => shops.id, { onDelete: "cascade" });

export const ROLES = ["owner", "lead", "tech", "desk"] as const;
export type Role = (typeof ROLES)[number];

export const members = sqliteTable(
  "members",
  {
    id: text("id").primaryKey(),
    shopId: ownedByShop(),
    userId: text("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    role: text("role", { enum: ROLES }).notNull(),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("members_shop_user").on(t.shopId, t.userId), index("members_user").on(t.userId)],
);

export const sessions = sqliteTable(
  "sessions",
  {
    id: text("id").primaryKey(),
    secretHash: blob("secret_hash", { mode: "buffer" }).notNull(),
    userId: text("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    shopId: text("shop_id").references(() => shops.id, { onDelete: "set null" }),
    createdAt: createdAt(),
    lastSeenAt: integer("last_seen_at", { mode: "timestamp_ms" }).notNull(),
    expiresAt: integer("expires_at", { mode: "timestamp_ms" }).notNull(),
  },
  (t) => [index("sessions_user").on(t.userId)],
);

// Failed sign-ins, counted over a sliding window for throttling (never a hard lock-out).
export const signInFailures = sqliteTable(
  "sign_in_failures",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    key: text("key").notNull(),
    at: integer("at", { mode: "timestamp_ms" }).notNull(),
  },
  (t) => [index("sign_in_failures_key_at").on(t.key, t.at)],
);

// Single-use links sent by e-mail: member invitations and password resets. Only a hash of the token is kept.
export const emailTokens = sqliteTable(
  "email_tokens",
  {
    id: text("id").primaryKey(),
    purpose: text("purpose", { enum: ["invite", "reset"] }).notNull(),
    tokenHash: text("token_hash").notNull().unique(),
    email: text("email").notNull(),
    shopId: text("shop_id").references(() => shops.id, { onDelete: "cascade" }),
    role: text("role", { enum: ROLES }),
    userId: text("user_id").references(() => users.id, { onDelete: "cascade" }),
    createdBy: text("created_by"),
    expiresAt: integer("expires_at", { mode: "timestamp_ms" }).notNull(),
    usedAt: integer("used_at", { mode: "timestamp_ms" }),
    createdAt: createdAt(),
  },
  (t) => [index("email_tokens_shop").on(t.shopId)],
);

export const boards = sqliteTable(
  "boards",
  {
    id: text("id").primaryKey(),
    shopId: ownedByShop(),
    maker: text("maker").notNull(),
    model: text("model").notNull(),
    boardNumber: text("board_number").notNull(),
    revision: text("revision").notNull().default(""),
    inputType: text("input_type", { enum: ["usb-c-pd", "barrel", "other"] }).notNull(),
    inputMillivolts: integer("input_millivolts").notNull(),
    batteryCells: integer("battery_cells").notNull().default(0),
    notes: text("notes").notNull().default(""),
    archivedAt: integer("archived_at", { mode: "timestamp_ms" }),
    createdAt: createdAt(),
  },
  (t) => [index("boards_shop").on(t.shopId), index("boards_shop_number").on(t.shopId, t.boardNumber)],
);

export const maps = sqliteTable(
  "maps",
  {
    id: text("id").primaryKey(),
    shopId: ownedByShop(),
    boardId: text("board_id")
      .notNull()
      .references(() => boards.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    // The draft is one JSON document (docs/decisions/002); revision counts saves so concurrent edits are caught.
    draft: text("draft", { mode: "json" }).$type<unknown>(),
    draftRevision: integer("draft_revision").notNull().default(0),
    draftUpdatedBy: text("draft_updated_by"),
    draftUpdatedAt: integer("draft_updated_at", { mode: "timestamp_ms" }),
    createdAt: createdAt(),
  },
  (t) => [index("maps_shop_board").on(t.shopId, t.boardId)],
);

export const mapVersions = sqliteTable(
  "map_versions",
  {
    id: text("id").primaryKey(),
    shopId: ownedByShop(),
    mapId: text("map_id")
      .notNull()
      .references(() => maps.id, { onDelete: "cascade" }),
    number: integer("number").notNull(),
    document: text("document", { mode: "json" }).$type<unknown>().notNull(),
    note: text("note").notNull().default(""),
    publishedBy: text("published_by"),
    publishedAt: createdAt(),
  },
  (t) => [uniqueIndex("map_versions_map_number").on(t.mapId, t.number)],
);

export const customers = sqliteTable(
  "customers",
  {
    id: text("id").primaryKey(),
    shopId: ownedByShop(),
    name: text("name").notNull(),
    email: text("email"),
    phone: text("phone"),
    consentToContact: integer("consent_to_contact", { mode: "boolean" }).notNull().default(false),
    erasedAt: integer("erased_at", { mode: "timestamp_ms" }),
    createdAt: createdAt(),
  },
  (t) => [index("customers_shop").on(t.shopId)],
);

export const JOB_STATES = [
  "received",
  "diagnosing",
  "awaiting-approval",
  "repairing",
  "testing",
  "ready",
  "closed",
  "declined",
] as const;

export const jobs = sqliteTable(
  "jobs",
  {
    id: text("id").primaryKey(),
    shopId: ownedByShop(),
    number: integer("number").notNull(),
    customerId: text("customer_id").references(() => customers.id, { onDelete: "set null" }),
    boardId: text("board_id").references(() => boards.id, { onDelete: "set null" }),
    serial: text("serial").notNull().default(""),
    complaint: text("complaint").notNull().default(""),
    state: text("state", { enum: JOB_STATES }).notNull().default("received"),
    assignedTo: text("assigned_to"),
    details: text("details", { mode: "json" }).$type<Record<string, unknown>>(),
    // Intake (issue 7): the device as received, what was agreed, and the passcode sealed with AES-256-GCM.
    conditionNotes: text("condition_notes").notNull().default(""),
    accessories: text("accessories").notNull().default(""),
    diagnosticFeeMinor: integer("diagnostic_fee_minor").notNull().default(0),
    termsAcceptedAt: integer("terms_accepted_at", { mode: "timestamp_ms" }),
    unclaimedDays: integer("unclaimed_days"),
    passcodeSealed: text("passcode_sealed"),
    warrantyOfJobId: text("warranty_of_job_id"),
    // False for a warranty comeback inside the shop's warranty period: nothing is charged.
    chargeable: integer("chargeable", { mode: "boolean" }).notNull().default(true),
    waivedBy: text("waived_by"),
    waivedAt: integer("waived_at", { mode: "timestamp_ms" }),
    waiverReason: text("waiver_reason"),
    stateChangedAt: integer("state_changed_at", { mode: "timestamp_ms" }),
    closedAt: integer("closed_at", { mode: "timestamp_ms" }),
    anonymisedAt: integer("anonymised_at", { mode: "timestamp_ms" }),
    createdBy: text("created_by"),
    createdAt: createdAt(),
    // Rollup for insights: how many of the shop's jobs carry this serial number (kept by the `jobs_serial_*`
    // triggers, ROLLUP_TRIGGERS, in the same statement as each job write). Only a serial with more than one
    // job can be a repeat failure.
    serialJobs: integer("serial_jobs").notNull().default(1),
  },
  (t) => [
    uniqueIndex("jobs_shop_number").on(t.shopId, t.number),
    index("jobs_shop_state").on(t.shopId, t.state),
    // Insights: repeat failures on the same serial number.
    index("jobs_shop_serial").on(t.shopId, t.serial),
    index("jobs_id_serial").on(t.id, t.serial, t.number),
    index("jobs_serial_repeats")
      .on(t.shopId, t.serial, t.number, t.id, t.serialJobs)
      .where(sql`${t.serialJobs} > 1 AND ${t.serial} <> ''`),
  ],
);

export const runs = sqliteTable(
  "runs",
  {
    id: text("id").primaryKey(),
    shopId: ownedByShop(),
    boardId: text("board_id")
      .notNull()
      .references(() => boards.id, { onDelete: "cascade" }),
    mapVersionId: text("map_version_id")
      .notNull()
      .references(() => mapVersions.id),
    jobId: text("job_id").references(() => jobs.id, { onDelete: "set null" }),
    techId: text("tech_id").notNull(),
    strategy: text("strategy", { enum: ["order", "split", "best"] }).notNull(),
    condition: text("condition", { mode: "json" }).$type<{ sourcesAttached: string[] }>().notNull(),
    status: text("status", { enum: ["open", "isolated", "no-fault-found", "closed"] })
      .notNull()
      .default("open"),
    outcome: text("outcome", { enum: ["powers-on", "still-dead", "new-symptom"] }),
    escalatedAt: integer("escalated_at", { mode: "timestamp_ms" }),
    // A "still dead" outcome starts a new round: only the current round's readings feed the analysis.
    round: integer("round").notNull().default(1),
    startedAt: createdAt(),
    isolatedAt: integer("isolated_at", { mode: "timestamp_ms" }),
    closedAt: integer("closed_at", { mode: "timestamp_ms" }),
    // Rollup for insights: readings that count (not skipped, not a correction), kept by the
    // `readings_count_*` triggers (ROLLUP_TRIGGERS) in the same statement as each reading write.
    readingCount: integer("reading_count").notNull().default(0),
    // Rollup for insights: the net of the last reading taken before escalated_at (`runs_escalation_*` triggers).
    escalationNetId: text("escalation_net_id"),
  },
  (t) => [
    index("runs_shop_board").on(t.shopId, t.boardId, t.startedAt),
    index("runs_version").on(t.mapVersionId),
    // Covering for insights' repeat failures (a job's runs); the job_id prefix serves the foreign key.
    index("runs_job").on(
      t.jobId,
      t.startedAt,
      t.closedAt,
      t.isolatedAt,
      t.boardId,
      t.outcome,
      t.shopId,
      t.mapVersionId,
      t.techId,
    ),
    // Insights (bench/insights.ts measures them): a shop's runs by date, covering every column the
    // insights queries read, so 100,000 runs aggregate from the index without touching the table.
    index("runs_shop_started").on(
      t.shopId,
      t.startedAt,
      t.boardId,
      t.mapVersionId,
      t.status,
      t.techId,
      t.outcome,
      t.strategy,
      t.isolatedAt,
      t.escalatedAt,
      t.jobId,
      t.closedAt,
      t.id,
    ),
    // Insights, one index per question so each aggregates in index order (no sort of 100,000 rows).
    // Hot spots: ended runs per board and version.
    index("runs_shop_board_version").on(
      t.shopId,
      t.boardId,
      t.mapVersionId,
      t.startedAt,
      t.status,
      t.techId,
      t.outcome,
    ),
    // Strategies: runs, isolated runs and readings per run per strategy (a histogram of reading_count).
    index("runs_strategy_readings").on(
      t.shopId,
      t.strategy,
      t.readingCount,
      t.startedAt,
      t.boardId,
      t.mapVersionId,
      t.techId,
      t.outcome,
      t.isolatedAt,
      t.escalatedAt,
    ),
    // Strategies: time to isolation in order, per strategy and overall, so a percentile is an OFFSET.
    index("runs_strategy_ms")
      .on(
        t.shopId,
        t.strategy,
        sql`(${t.isolatedAt} - ${t.startedAt})`,
        t.startedAt,
        t.isolatedAt,
        t.boardId,
        t.mapVersionId,
        t.techId,
        t.outcome,
      )
      .where(sql`${t.isolatedAt} IS NOT NULL`),
    index("runs_ms")
      .on(
        t.shopId,
        sql`(${t.isolatedAt} - ${t.startedAt})`,
        t.startedAt,
        t.isolatedAt,
        t.boardId,
        t.mapVersionId,
        t.techId,
        t.outcome,
      )
      .where(sql`${t.isolatedAt} IS NOT NULL`),
    // Escalations: only the escalated runs, in the order the escalation spots are grouped (so no sort), the
    // window and the other filters checked on the entries. escalated_at is listed although the WHERE implies
    // it: SQLite treats a partial index as covering only when it holds every column the query names.
    index("runs_escalated")
      .on(
        t.shopId,
        t.boardId,
        t.mapVersionId,
        t.escalationNetId,
        t.startedAt,
        t.techId,
        t.outcome,
        t.escalatedAt,
      )
      .where(sql`${t.escalatedAt} IS NOT NULL`),
    // Repeat failures: jobs fixed ("powers on") in the window, in job order.
    index("runs_outcome_job")
      .on(t.shopId, t.outcome, t.jobId, t.startedAt, t.boardId, t.mapVersionId, t.techId)
      .where(sql`${t.jobId} IS NOT NULL`),
  ],
);

export const readings = sqliteTable(
  "readings",
  {
    // Client-generated id, so a retried submission is recognised and stored once.
    id: text("id").primaryKey(),
    shopId: ownedByShop(),
    runId: text("run_id")
      .notNull()
      .references(() => runs.id, { onDelete: "cascade" }),
    seq: integer("seq").notNull(),
    netId: text("net_id").notNull(),
    mode: text("mode", { enum: ["voltage", "resistance", "diode"] }).notNull(),
    text: text("text").notNull(),
    value: text("value").notNull(),
    verdict: text("verdict").notNull(),
    replacesId: text("replaces_id"),
    skipped: integer("skipped", { mode: "boolean" }).notNull().default(false),
    note: text("note"),
    round: integer("round").notNull().default(1),
    takenBy: text("taken_by").notNull(),
    takenAt: createdAt(),
  },
  (t) => [
    uniqueIndex("readings_run_seq").on(t.runId, t.seq),
    index("readings_shop_net").on(t.shopId, t.netId),
    // Insights: readings per run and the last reading before an escalation, from the index alone.
    index("readings_run_cover").on(t.runId, t.seq, t.takenAt, t.netId, t.skipped, t.replacesId),
  ],
);

export const findings = sqliteTable(
  "findings",
  {
    id: text("id").primaryKey(),
    shopId: ownedByShop(),
    runId: text("run_id")
      .notNull()
      .references(() => runs.id, { onDelete: "cascade" }),
    boardId: text("board_id").notNull(),
    mapVersionId: text("map_version_id").notNull(),
    kind: text("kind", { enum: ["part", "short", "no-fault-found"] }).notNull(),
    nodeId: text("node_id"),
    fixKind: text("fix_kind"),
    partsUsed: text("parts_used", { mode: "json" }).$type<string[]>(),
    outcome: text("outcome", { enum: ["powers-on", "still-dead", "new-symptom"] }),
    round: integer("round").notNull().default(1),
    recordedBy: text("recorded_by"),
    createdAt: createdAt(),
    // The run's filter columns copied onto its findings for insights, so hot spots, parts and first-time fix
    // aggregate findings without a join per run. Kept by the `findings_run_copy_*` triggers (ROLLUP_TRIGGERS)
    // in the same statement as the finding's insert and as every change to the run.
    runStartedAt: integer("run_started_at"),
    runBoardId: text("run_board_id"),
    runVersionId: text("run_version_id"),
    runTechId: text("run_tech_id"),
    runStatus: text("run_status"),
    runOutcome: text("run_outcome"),
    /** UTC calendar month of created_at ("2026-03"), by the same triggers: parts are counted per month. */
    createdMonth: text("created_month"),
    /** 0 when an earlier part/short finding of the same run names the same node (hot spots count runs). */
    nodeFirst: integer("node_first").notNull().default(1),
  },
  (t) => [
    index("findings_shop_board_node").on(t.shopId, t.boardId, t.nodeId),
    // Insights: hot spots per board and node, in index order.
    index("findings_hot").on(
      t.shopId,
      t.runBoardId,
      t.nodeId,
      t.runStartedAt,
      t.kind,
      t.runStatus,
      t.runTechId,
      t.runOutcome,
      t.runVersionId,
      t.nodeFirst,
    ),
    // Insights: first-time fix per fix type.
    index("findings_fix")
      .on(
        t.shopId,
        t.fixKind,
        t.runStartedAt,
        t.runBoardId,
        t.runVersionId,
        t.runTechId,
        t.runOutcome,
        t.outcome,
      )
      .where(sql`${t.fixKind} IS NOT NULL AND ${t.outcome} IS NOT NULL`),
    // Insights: parts per month, counted in index order by parts list, UTC month and map version (the version
    // before the window's columns, so no group needs a sort or a list of versions to split afterwards).
    index("findings_parts_by_version")
      .on(
        t.shopId,
        t.partsUsed,
        t.createdMonth,
        t.runVersionId,
        t.runStartedAt,
        t.runBoardId,
        t.runTechId,
        t.runOutcome,
      )
      .where(sql`${t.partsUsed} IS NOT NULL`),
    // Insights: findings of a set of runs, and parts used per month.
    // Kept narrow on purpose: the bench measured a wider covering version slower (more pages per probe).
    index("findings_run").on(t.runId, t.nodeId, t.kind),
    index("findings_shop_created").on(t.shopId, t.createdAt),
  ],
);

export const uploads = sqliteTable(
  "uploads",
  {
    id: text("id").primaryKey(),
    shopId: ownedByShop(),
    storageKey: text("storage_key").notNull(),
    contentType: text("content_type").notNull(),
    bytes: integer("bytes").notNull(),
    sha256: text("sha256").notNull(),
    purpose: text("purpose").notNull(),
    uploadedBy: text("uploaded_by").notNull(),
    createdAt: createdAt(),
  },
  (t) => [index("uploads_shop").on(t.shopId)],
);

export const auditEvents = sqliteTable(
  "audit_events",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    shopId: text("shop_id").references(() => shops.id, { onDelete: "cascade" }),
    actorId: text("actor_id"),
    action: text("action").notNull(),
    subject: text("subject"),
    data: text("data", { mode: "json" }).$type<Record<string, unknown>>(),
    at: createdAt(),
  },
  (t) => [index("audit_shop_at").on(t.shopId, t.at)],
);

// Captured e-mail when MAIL_CAPTURE=1: kept in the database so every server process and the tests see it.
export const outbox = sqliteTable("outbox", {
  id: integer("id").primaryKey({ autoIncrement: true }),
  to: text("to").notNull(),
  subject: text("subject").notNull(),
  text: text("text").notNull(),
  html: text("html"),
  at: createdAt(),
});

// A shop's multimeters: accuracy per range as ±(% of reading + counts), used to widen judging windows.
export const meterProfiles = sqliteTable(
  "meter_profiles",
  {
    id: text("id").primaryKey(),
    shopId: ownedByShop(),
    name: text("name").notNull(),
    profile: text("profile", { mode: "json" }).$type<Record<string, unknown>>().notNull(),
    isDefault: integer("is_default", { mode: "boolean" }).notNull().default(false),
    updatedBy: text("updated_by"),
    createdAt: createdAt(),
    updatedAt: integer("updated_at", { mode: "timestamp_ms" }),
  },
  (t) => [index("meter_profiles_shop").on(t.shopId)],
);

// The nodes each published map version contains, written in the same transaction as the version
// (indexMapVersionNodes in map-version-nodes.server.ts). Node ids are stable across versions, so insights
// count "runs on versions containing the node" in SQL without reading the version documents.
export const mapVersionNodes = sqliteTable(
  "map_version_nodes",
  {
    mapVersionId: text("map_version_id")
      .notNull()
      .references(() => mapVersions.id, { onDelete: "cascade" }),
    nodeId: text("node_id").notNull(),
    nodeName: text("node_name").notNull(),
    kind: text("kind", { enum: ["source", "rail", "signal", "part"] }).notNull(),
    refdes: text("refdes"),
  },
  (t) => [
    primaryKey({ columns: [t.mapVersionId, t.nodeId] }),
    index("map_version_nodes_name").on(t.nodeName),
  ],
);

// Personal API tokens for /api/v1: "rw_<id>.<secret>", only SHA-256(secret) kept. The member's current role
// decides what a token may read, so a role change or removal takes effect at once.
export const apiTokens = sqliteTable(
  "api_tokens",
  {
    id: text("id").primaryKey(),
    shopId: ownedByShop(),
    memberId: text("member_id")
      .notNull()
      .references(() => members.id, { onDelete: "cascade" }),
    userId: text("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    secretHash: blob("secret_hash", { mode: "buffer" }).notNull(),
    lastUsedAt: integer("last_used_at", { mode: "timestamp_ms" }),
    revokedAt: integer("revoked_at", { mode: "timestamp_ms" }),
    createdAt: createdAt(),
  },
  (t) => [index("api_tokens_member").on(t.memberId)],
);

// Notes on a run: the tech's notes (with an optional photo) and requests for help, and a lead's notes or extra checks
// (net + mode) that the walker shows before the engine's next reading until the tech takes them.
export const runNotes = sqliteTable(
  "run_notes",
  {
    id: text("id").primaryKey(),
    shopId: ownedByShop(),
    runId: text("run_id")
      .notNull()
      .references(() => runs.id, { onDelete: "cascade" }),
    authorId: text("author_id").notNull(),
    kind: text("kind", { enum: ["note", "help", "lead-note", "lead-step"] }).notNull(),
    text: text("text").notNull(),
    netId: text("net_id"),
    mode: text("mode", { enum: ["voltage", "resistance", "diode"] }),
    doneReadingId: text("done_reading_id"),
    // A photo of what the tech sees (a burnt part, corrosion, the meter's display), shown with the note.
    uploadId: text("upload_id").references(() => uploads.id, { onDelete: "set null" }),
    createdAt: createdAt(),
  },
  (t) => [index("run_notes_run").on(t.runId, t.createdAt)],
);

// In-app notices for one member (e.g. a lead asked to help on a run); unread ones show as a badge in the nav.
export const notices = sqliteTable(
  "notices",
  {
    id: text("id").primaryKey(),
    shopId: ownedByShop(),
    userId: text("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    runId: text("run_id").references(() => runs.id, { onDelete: "cascade" }),
    text: text("text").notNull(),
    readAt: integer("read_at", { mode: "timestamp_ms" }),
    createdAt: createdAt(),
  },
  (t) => [index("notices_user_unread").on(t.shopId, t.userId, t.readAt)],
);

// ---- Jobs, quotes and payments (issue 7) ----

// Every state change of a job: who (a member, the customer through the approval page, or the system), when.
export const jobEvents = sqliteTable(
  "job_events",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    shopId: ownedByShop(),
    jobId: text("job_id")
      .notNull()
      .references(() => jobs.id, { onDelete: "cascade" }),
    fromState: text("from_state", { enum: JOB_STATES }),
    toState: text("to_state", { enum: JOB_STATES }).notNull(),
    actorKind: text("actor_kind", { enum: ["member", "customer", "system"] }).notNull(),
    actorId: text("actor_id"),
    note: text("note"),
    at: createdAt(),
  },
  (t) => [index("job_events_job").on(t.jobId, t.at)],
);

export const jobPhotos = sqliteTable(
  "job_photos",
  {
    id: text("id").primaryKey(),
    shopId: ownedByShop(),
    jobId: text("job_id")
      .notNull()
      .references(() => jobs.id, { onDelete: "cascade" }),
    uploadId: text("upload_id")
      .notNull()
      .references(() => uploads.id, { onDelete: "cascade" }),
    createdAt: createdAt(),
  },
  (t) => [index("job_photos_job").on(t.jobId)],
);

export const QUOTE_STATUSES = ["draft", "sent", "approved", "declined"] as const;

// Money is integer minor units of the shop's currency; prices are tax-exclusive (app/lib/money.ts).
export const quotes = sqliteTable(
  "quotes",
  {
    id: text("id").primaryKey(),
    shopId: ownedByShop(),
    jobId: text("job_id")
      .notNull()
      .references(() => jobs.id, { onDelete: "cascade" }),
    number: integer("number").notNull(),
    status: text("status", { enum: QUOTE_STATUSES }).notNull().default("draft"),
    findingId: text("finding_id"),
    currency: text("currency").notNull(),
    taxRateBp: integer("tax_rate_bp").notNull(),
    subtotalMinor: integer("subtotal_minor").notNull(),
    taxMinor: integer("tax_minor").notNull(),
    totalMinor: integer("total_minor").notNull(),
    depositMinor: integer("deposit_minor").notNull().default(0),
    note: text("note").notNull().default(""),
    // Only SHA-256 of the approval link's token is kept.
    tokenHash: text("token_hash").unique(),
    expiresAt: integer("expires_at", { mode: "timestamp_ms" }),
    sentAt: integer("sent_at", { mode: "timestamp_ms" }),
    decidedAt: integer("decided_at", { mode: "timestamp_ms" }),
    createdBy: text("created_by"),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("quotes_shop_number").on(t.shopId, t.number), index("quotes_job").on(t.jobId)],
);

export const quoteLines = sqliteTable(
  "quote_lines",
  {
    id: text("id").primaryKey(),
    shopId: ownedByShop(),
    quoteId: text("quote_id")
      .notNull()
      .references(() => quotes.id, { onDelete: "cascade" }),
    position: integer("position").notNull(),
    kind: text("kind", { enum: ["part", "labour", "fee"] }).notNull(),
    description: text("description").notNull(),
    quantity: integer("quantity").notNull(),
    unitMinor: integer("unit_minor").notNull(),
    totalMinor: integer("total_minor").notNull(),
  },
  (t) => [index("quote_lines_quote").on(t.quoteId, t.position)],
);

export const invoices = sqliteTable(
  "invoices",
  {
    id: text("id").primaryKey(),
    shopId: ownedByShop(),
    jobId: text("job_id")
      .notNull()
      .references(() => jobs.id, { onDelete: "cascade" }),
    quoteId: text("quote_id"),
    number: integer("number").notNull(),
    status: text("status", { enum: ["open", "paid", "void"] })
      .notNull()
      .default("open"),
    currency: text("currency").notNull(),
    subtotalMinor: integer("subtotal_minor").notNull(),
    taxMinor: integer("tax_minor").notNull(),
    totalMinor: integer("total_minor").notNull(),
    paidMinor: integer("paid_minor").notNull().default(0),
    refundedMinor: integer("refunded_minor").notNull().default(0),
    paidAt: integer("paid_at", { mode: "timestamp_ms" }),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("invoices_shop_number").on(t.shopId, t.number), index("invoices_job").on(t.jobId)],
);

export const payments = sqliteTable(
  "payments",
  {
    id: text("id").primaryKey(),
    shopId: ownedByShop(),
    invoiceId: text("invoice_id")
      .notNull()
      .references(() => invoices.id, { onDelete: "cascade" }),
    kind: text("kind", { enum: ["deposit", "payment", "refund"] }).notNull(),
    method: text("method", { enum: ["online", "cash", "card-terminal"] }).notNull(),
    status: text("status", { enum: ["pending", "succeeded", "failed"] }).notNull(),
    amountMinor: integer("amount_minor").notNull(),
    currency: text("currency").notNull(),
    providerSessionId: text("provider_session_id"),
    providerPaymentIntentId: text("provider_payment_intent_id"),
    providerRefundId: text("provider_refund_id"),
    refundOf: text("refund_of"),
    note: text("note").notNull().default(""),
    recordedBy: text("recorded_by"),
    settledAt: integer("settled_at", { mode: "timestamp_ms" }),
    /** A counter payment's form carries one, so a double submit records the money once. */
    idempotencyKey: text("idempotency_key"),
    createdAt: createdAt(),
  },
  (t) => [
    index("payments_invoice").on(t.invoiceId),
    index("payments_session").on(t.providerSessionId),
    uniqueIndex("payments_shop_idempotency").on(t.shopId, t.idempotencyKey),
  ],
);

// Provider webhook events already applied: a replayed delivery finds its id here and changes nothing.
export const webhookEvents = sqliteTable("webhook_events", {
  id: text("id").primaryKey(),
  type: text("type").notNull(),
  receivedAt: createdAt(),
});

// ---- Insights rollups (docs/decisions/006, bench/insights.ts) ----
// SQLite triggers keep the rollup columns above (runs.reading_count, findings.run_*) in the same statement, so
// in the same transaction, as the rows they summarise, whichever code path writes them (the walker, the demo
// seed, fixtures, scripts). Drizzle-kit does not generate triggers: db.server.ts installs these after the
// migrations and, when it (re)creates any of them, recomputes every rollup column in the same transaction.
const FINDING_RUN_COLUMNS =
  "run_started_at, run_board_id, run_version_id, run_tech_id, run_status, run_outcome";
const RUN_COLUMNS = "created_at, board_id, map_version_id, tech_id, status, outcome";
const MONTH = (row: string) => `strftime('%Y-%m', ${row}.created_at / 1000, 'unixepoch')`;
const counted = (row: string) => `${row}.skipped = 0 AND ${row}.replaces_id IS NULL`;

export const ROLLUP_TRIGGERS: Record<string, string> = {
  readings_count_insert: `CREATE TRIGGER readings_count_insert AFTER INSERT ON readings WHEN ${counted("NEW")}
BEGIN UPDATE runs SET reading_count = reading_count + 1 WHERE id = NEW.run_id; END`,
  readings_count_delete: `CREATE TRIGGER readings_count_delete AFTER DELETE ON readings WHEN ${counted("OLD")}
BEGIN UPDATE runs SET reading_count = reading_count - 1 WHERE id = OLD.run_id; END`,
  readings_count_update: `CREATE TRIGGER readings_count_update AFTER UPDATE OF run_id, skipped, replaces_id ON readings
BEGIN
  UPDATE runs SET reading_count = reading_count - 1 WHERE id = OLD.run_id AND ${counted("OLD")};
  UPDATE runs SET reading_count = reading_count + 1 WHERE id = NEW.run_id AND ${counted("NEW")};
END`,
  findings_run_copy_insert: `CREATE TRIGGER findings_run_copy_insert AFTER INSERT ON findings
BEGIN UPDATE findings SET (${FINDING_RUN_COLUMNS}) = (SELECT ${RUN_COLUMNS} FROM runs WHERE id = NEW.run_id),
  created_month = ${MONTH("NEW")} WHERE rowid = NEW.rowid; END`,
  findings_run_copy_update: `CREATE TRIGGER findings_run_copy_update AFTER UPDATE OF run_id, created_at ON findings
BEGIN UPDATE findings SET (${FINDING_RUN_COLUMNS}) = (SELECT ${RUN_COLUMNS} FROM runs WHERE id = NEW.run_id),
  created_month = ${MONTH("NEW")} WHERE rowid = NEW.rowid; END`,
  findings_run_copy_from_run: `CREATE TRIGGER findings_run_copy_from_run AFTER UPDATE OF ${RUN_COLUMNS} ON runs
BEGIN UPDATE findings SET (${FINDING_RUN_COLUMNS}) =
  (NEW.created_at, NEW.board_id, NEW.map_version_id, NEW.tech_id, NEW.status, NEW.outcome)
  WHERE run_id = NEW.id; END`,
};

const ESCALATION_NET = (run: string) => `(SELECT x.net_id FROM readings x
    WHERE x.run_id = ${run}.id AND x.created_at <= ${run}.escalated_at ORDER BY x.seq DESC LIMIT 1)`;
const escalationFor = (runId: string) =>
  `UPDATE runs SET escalation_net_id = ${ESCALATION_NET("runs")} WHERE id = ${runId} AND escalated_at IS NOT NULL;`;
const serialCount = (row: string) => `UPDATE jobs SET serial_jobs =
    (SELECT COUNT(*) FROM jobs k WHERE k.shop_id = ${row}.shop_id AND k.serial = ${row}.serial)
    WHERE shop_id = ${row}.shop_id AND serial = ${row}.serial AND ${row}.serial <> '';`;

const nodeFirstFor = (runId: string) => `UPDATE findings SET node_first = NOT EXISTS (SELECT 1 FROM findings g
    WHERE g.run_id = findings.run_id AND g.node_id = findings.node_id AND g.kind IN ('part', 'short')
      AND g.rowid < findings.rowid) WHERE run_id = ${runId};`;

Object.assign(ROLLUP_TRIGGERS, {
  findings_node_first_insert: `CREATE TRIGGER findings_node_first_insert AFTER INSERT ON findings
BEGIN ${nodeFirstFor("NEW.run_id")} END`,
  findings_node_first_delete: `CREATE TRIGGER findings_node_first_delete AFTER DELETE ON findings
BEGIN ${nodeFirstFor("OLD.run_id")} END`,
  findings_node_first_update: `CREATE TRIGGER findings_node_first_update AFTER UPDATE OF run_id, node_id, kind ON findings
BEGIN ${nodeFirstFor("OLD.run_id")} ${nodeFirstFor("NEW.run_id")} END`,
  runs_escalation_set: `CREATE TRIGGER runs_escalation_set AFTER UPDATE OF escalated_at ON runs
BEGIN UPDATE runs SET escalation_net_id = ${ESCALATION_NET("NEW")} WHERE id = NEW.id; END`,
  runs_escalation_insert: `CREATE TRIGGER runs_escalation_insert AFTER INSERT ON runs WHEN NEW.escalated_at IS NOT NULL
BEGIN ${escalationFor("NEW.id")} END`,
  runs_escalation_reading_insert: `CREATE TRIGGER runs_escalation_reading_insert AFTER INSERT ON readings
BEGIN ${escalationFor("NEW.run_id")} END`,
  runs_escalation_reading_delete: `CREATE TRIGGER runs_escalation_reading_delete AFTER DELETE ON readings
BEGIN ${escalationFor("OLD.run_id")} END`,
  runs_escalation_reading_update: `CREATE TRIGGER runs_escalation_reading_update
AFTER UPDATE OF run_id, seq, created_at, net_id ON readings
BEGIN ${escalationFor("OLD.run_id")} ${escalationFor("NEW.run_id")} END`,
  jobs_serial_insert: `CREATE TRIGGER jobs_serial_insert AFTER INSERT ON jobs BEGIN ${serialCount("NEW")} END`,
  jobs_serial_delete: `CREATE TRIGGER jobs_serial_delete AFTER DELETE ON jobs BEGIN ${serialCount("OLD")} END`,
  jobs_serial_update: `CREATE TRIGGER jobs_serial_update AFTER UPDATE OF shop_id, serial ON jobs
BEGIN ${serialCount("OLD")} ${serialCount("NEW")} END`,
});

/** Recomputes every rollup column from its source rows (run with the triggers' (re)installation). */
export const ROLLUP_BACKFILL = [
  `UPDATE runs SET reading_count = (SELECT COUNT(*) FROM readings x WHERE x.run_id = runs.id AND ${counted("x")})`,
  `UPDATE findings SET (${FINDING_RUN_COLUMNS}) = (SELECT ${RUN_COLUMNS} FROM runs WHERE id = findings.run_id),
     created_month = ${MONTH("findings")}`,
  nodeFirstFor("findings.run_id").replace(/ WHERE run_id = findings\.run_id;$/, ""),
  `UPDATE runs SET escalation_net_id = CASE WHEN escalated_at IS NULL THEN NULL ELSE ${ESCALATION_NET("runs")} END`,
  `UPDATE jobs SET serial_jobs = CASE WHEN serial = '' THEN 1
     ELSE (SELECT COUNT(*) FROM jobs k WHERE k.shop_id = jobs.shop_id AND k.serial = jobs.serial) END`,
];

// ---- Daily rollups of a shop's whole history (no board, version, technician or outcome filter) ----
// Insights windows are whole UTC days, and the pages open unfiltered: those views sum a few rows per day here
// instead of counting 100,000 runs a year (a filtered view reads the rows, a fraction of them). Each table is a
// sum over its source rows, kept by three triggers (insert, delete, update of the columns it reads) that take
// away the old row's share and add the new one's, so the sums stay right whatever order SQLite fires the
// triggers in (the run columns copied onto a finding arrive by a later UPDATE of it, which they see too).
// `day` is the UTC day number of the run's start (milliseconds ÷ 86,400,000). Keys are never NULL. The tables
// are WITHOUT ROWID (set in drizzle/0004, which drizzle's table builder cannot say): a window's sums then read
// the primary key's own b-tree, with no row lookup per day and key.

/** Runs per strategy and reading count (runs.reading_count), with isolated and escalated runs. */
export const rollupDayStrategies = sqliteTable(
  "rollup_day_strategies",
  {
    shopId: text("shop_id").notNull(),
    day: integer("day").notNull(),
    strategy: text("strategy").notNull(),
    readingCount: integer("reading_count").notNull(),
    runs: integer("runs").notNull().default(0),
    isolated: integer("isolated").notNull().default(0),
    escalated: integer("escalated").notNull().default(0),
  },
  (t) => [primaryKey({ columns: [t.shopId, t.day, t.strategy, t.readingCount] })],
);

/** Fixes with a re-test outcome per fix type, and how many of them powered on. */
export const rollupDayFixKinds = sqliteTable(
  "rollup_day_fix_kinds",
  {
    shopId: text("shop_id").notNull(),
    day: integer("day").notNull(),
    fixKind: text("fix_kind").notNull(),
    fixes: integer("fixes").notNull().default(0),
    poweredOn: integer("powered_on").notNull().default(0),
  },
  (t) => [primaryKey({ columns: [t.shopId, t.day, t.fixKind] })],
);

/** Ended runs per board and map version (the hot spots' denominators). */
export const rollupDayVersionRuns = sqliteTable(
  "rollup_day_version_runs",
  {
    shopId: text("shop_id").notNull(),
    day: integer("day").notNull(),
    boardId: text("board_id").notNull(),
    mapVersionId: text("map_version_id").notNull(),
    ended: integer("ended").notNull().default(0),
  },
  // Day last: a window's sums come out grouped by board and version in key order, with no sort.
  (t) => [primaryKey({ columns: [t.shopId, t.boardId, t.mapVersionId, t.day] })],
);

/** Ended runs whose first part or short finding on a node was that node (the hot spots' failures). */
export const rollupDayNodeFails = sqliteTable(
  "rollup_day_node_fails",
  {
    shopId: text("shop_id").notNull(),
    day: integer("day").notNull(),
    boardId: text("board_id").notNull(),
    nodeId: text("node_id").notNull(),
    n: integer("n").notNull().default(0),
  },
  // Day last, as above: sorting 40,000 day rows by node cost more than the rollup saved.
  (t) => [primaryKey({ columns: [t.shopId, t.boardId, t.nodeId, t.day] })],
);

/** Findings with a parts list, per list, month the finding was recorded and map version (parts to stock). */
export const rollupDayParts = sqliteTable(
  "rollup_day_parts",
  {
    shopId: text("shop_id").notNull(),
    partsUsed: text("parts_used").notNull(),
    createdMonth: text("created_month").notNull(),
    mapVersionId: text("map_version_id").notNull(),
    day: integer("day").notNull(),
    n: integer("n").notNull().default(0),
  },
  // The parts page's grouping order first, day last (as above).
  (t) => [primaryKey({ columns: [t.shopId, t.partsUsed, t.createdMonth, t.mapVersionId, t.day] })],
);

type DayRollup = {
  table: string;
  source: "runs" | "findings";
  keys: Record<string, (row: string) => string>;
  values: Record<string, (row: string) => string>;
  /** Whether a source row counts at all. */
  when: (row: string) => string;
  /** Source columns the keys, values and condition read: an update of any of them moves the row's share. */
  watch: string[];
};

/**
 * The UTC day number of a millisecond time. A default created_at is `unixepoch('subsec') * 1000`, a real
 * number, and a real divided by an integer stays a real: truncated to whole milliseconds first, every time of a
 * day gives that day's whole number (one rollup row), and a time just before midnight stays on its own day,
 * as `created_at < midnight` in the row-counting query has it.
 */
const dayOf = (ms: string) => `(CAST(${ms} AS INTEGER) / 86400000)`;

export const DAY_ROLLUPS: DayRollup[] = [
  {
    table: "rollup_day_strategies",
    source: "runs",
    keys: {
      shop_id: (r) => `${r}.shop_id`,
      day: (r) => dayOf(`${r}.created_at`),
      strategy: (r) => `${r}.strategy`,
      reading_count: (r) => `${r}.reading_count`,
    },
    values: {
      runs: () => "1",
      isolated: (r) => `(${r}.isolated_at IS NOT NULL)`,
      escalated: (r) => `(${r}.escalated_at IS NOT NULL)`,
    },
    when: (r) => `${r}.created_at IS NOT NULL`,
    watch: ["shop_id", "created_at", "strategy", "reading_count", "isolated_at", "escalated_at"],
  },
  {
    table: "rollup_day_fix_kinds",
    source: "findings",
    keys: {
      shop_id: (r) => `${r}.shop_id`,
      day: (r) => dayOf(`${r}.run_started_at`),
      fix_kind: (r) => `${r}.fix_kind`,
    },
    values: { fixes: () => "1", powered_on: (r) => `(${r}.outcome = 'powers-on')` },
    when: (r) => `${r}.run_started_at IS NOT NULL AND ${r}.fix_kind IS NOT NULL AND ${r}.outcome IS NOT NULL`,
    watch: ["shop_id", "run_started_at", "fix_kind", "outcome"],
  },
  {
    table: "rollup_day_version_runs",
    source: "runs",
    keys: {
      shop_id: (r) => `${r}.shop_id`,
      day: (r) => dayOf(`${r}.created_at`),
      board_id: (r) => `${r}.board_id`,
      map_version_id: (r) => `${r}.map_version_id`,
    },
    values: { ended: () => "1" },
    when: (r) => `${r}.created_at IS NOT NULL AND ${r}.status <> 'open'`,
    watch: ["shop_id", "created_at", "board_id", "map_version_id", "status"],
  },
  {
    table: "rollup_day_node_fails",
    source: "findings",
    keys: {
      shop_id: (r) => `${r}.shop_id`,
      day: (r) => dayOf(`${r}.run_started_at`),
      board_id: (r) => `${r}.run_board_id`,
      node_id: (r) => `${r}.node_id`,
    },
    values: { n: () => "1" },
    when: (r) =>
      `${r}.run_started_at IS NOT NULL AND ${r}.run_board_id IS NOT NULL AND ${r}.node_id IS NOT NULL
    AND ${r}.kind IN ('part', 'short') AND ${r}.node_first = 1 AND ${r}.run_status <> 'open'`,
    watch: ["shop_id", "run_started_at", "run_board_id", "node_id", "kind", "node_first", "run_status"],
  },
  {
    table: "rollup_day_parts",
    source: "findings",
    keys: {
      shop_id: (r) => `${r}.shop_id`,
      parts_used: (r) => `${r}.parts_used`,
      created_month: (r) => `${r}.created_month`,
      map_version_id: (r) => `${r}.run_version_id`,
      day: (r) => dayOf(`${r}.run_started_at`),
    },
    values: { n: () => "1" },
    when: (r) =>
      `${r}.run_started_at IS NOT NULL AND ${r}.parts_used IS NOT NULL AND ${r}.created_month IS NOT NULL
    AND ${r}.run_version_id IS NOT NULL`,
    watch: ["shop_id", "run_started_at", "parts_used", "created_month", "run_version_id"],
  },
];

/** Adds (sign 1) or takes away (sign -1) one source row's share, when the row counts. */
function rollupShare(r: DayRollup, row: string, sign: 1 | -1) {
  const keys = Object.keys(r.keys);
  const values = Object.keys(r.values);
  return `INSERT INTO ${r.table} (${[...keys, ...values].join(", ")})
  SELECT ${[...keys.map((k) => r.keys[k](row)), ...values.map((v) => `${sign} * ${r.values[v](row)}`)].join(", ")}
  WHERE ${r.when(row)}
  ON CONFLICT (${keys.join(", ")}) DO UPDATE SET ${values.map((v) => `${v} = ${v} + excluded.${v}`).join(", ")};`;
}

for (const r of DAY_ROLLUPS) {
  Object.assign(ROLLUP_TRIGGERS, {
    [`${r.table}_insert`]: `CREATE TRIGGER ${r.table}_insert AFTER INSERT ON ${r.source}
BEGIN ${rollupShare(r, "NEW", 1)} END`,
    [`${r.table}_delete`]: `CREATE TRIGGER ${r.table}_delete AFTER DELETE ON ${r.source}
BEGIN ${rollupShare(r, "OLD", -1)} END`,
    [`${r.table}_update`]: `CREATE TRIGGER ${r.table}_update AFTER UPDATE OF ${r.watch.join(", ")} ON ${r.source}
BEGIN ${rollupShare(r, "OLD", -1)} ${rollupShare(r, "NEW", 1)} END`,
  });
  const keys = Object.keys(r.keys);
  const values = Object.keys(r.values);
  // After the rollup columns above are recomputed (the daily sums read reading_count and the copied run_*).
  ROLLUP_BACKFILL.push(
    `DELETE FROM ${r.table}`,
    `INSERT INTO ${r.table} (${[...keys, ...values].join(", ")})
  SELECT ${[...keys.map((k) => r.keys[k]("s")), ...values.map((v) => `SUM(${r.values[v]("s")})`)].join(", ")}
  FROM ${r.source} s WHERE ${r.when("s")} GROUP BY ${keys.map((k) => r.keys[k]("s")).join(", ")}`,
  );
}
