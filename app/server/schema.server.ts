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
  createdAt: createdAt(),
});

export const ROLES = ["owner", "lead", "tech", "desk"] as const;
export type Role = (typeof ROLES)[number];

export const members = sqliteTable(
  "members",
  {
    id: text("id").primaryKey(),
    shopId: text("shop_id")
      .notNull()
      .references(() => shops.id, { onDelete: "cascade" }),
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
    shopId: text("shop_id")
      .notNull()
      .references(() => shops.id, { onDelete: "cascade" }),
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
    shopId: text("shop_id")
      .notNull()
      .references(() => shops.id, { onDelete: "cascade" }),
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
    shopId: text("shop_id")
      .notNull()
      .references(() => shops.id, { onDelete: "cascade" }),
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
    shopId: text("shop_id")
      .notNull()
      .references(() => shops.id, { onDelete: "cascade" }),
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
    shopId: text("shop_id")
      .notNull()
      .references(() => shops.id, { onDelete: "cascade" }),
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
  },
  (t) => [
    uniqueIndex("jobs_shop_number").on(t.shopId, t.number),
    index("jobs_shop_state").on(t.shopId, t.state),
    // Insights: repeat failures on the same serial number.
    index("jobs_shop_serial").on(t.shopId, t.serial),
    index("jobs_id_serial").on(t.id, t.serial, t.number),
  ],
);

export const runs = sqliteTable(
  "runs",
  {
    id: text("id").primaryKey(),
    shopId: text("shop_id")
      .notNull()
      .references(() => shops.id, { onDelete: "cascade" }),
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
  },
  (t) => [
    index("runs_shop_board").on(t.shopId, t.boardId, t.startedAt),
    index("runs_version").on(t.mapVersionId),
    index("runs_job").on(t.jobId),
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
  ],
);

export const readings = sqliteTable(
  "readings",
  {
    // Client-generated id, so a retried submission is recognised and stored once.
    id: text("id").primaryKey(),
    shopId: text("shop_id")
      .notNull()
      .references(() => shops.id, { onDelete: "cascade" }),
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
    shopId: text("shop_id")
      .notNull()
      .references(() => shops.id, { onDelete: "cascade" }),
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
  },
  (t) => [
    index("findings_shop_board_node").on(t.shopId, t.boardId, t.nodeId),
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
    shopId: text("shop_id")
      .notNull()
      .references(() => shops.id, { onDelete: "cascade" }),
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
    shopId: text("shop_id")
      .notNull()
      .references(() => shops.id, { onDelete: "cascade" }),
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
    shopId: text("shop_id")
      .notNull()
      .references(() => shops.id, { onDelete: "cascade" }),
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

// Notes on a run: the tech's notes and requests for help, and a lead's notes or extra checks
// (net + mode) that the walker shows before the engine's next reading until the tech takes them.
export const runNotes = sqliteTable(
  "run_notes",
  {
    id: text("id").primaryKey(),
    shopId: text("shop_id")
      .notNull()
      .references(() => shops.id, { onDelete: "cascade" }),
    runId: text("run_id")
      .notNull()
      .references(() => runs.id, { onDelete: "cascade" }),
    authorId: text("author_id").notNull(),
    kind: text("kind", { enum: ["note", "help", "lead-note", "lead-step"] }).notNull(),
    text: text("text").notNull(),
    netId: text("net_id"),
    mode: text("mode", { enum: ["voltage", "resistance", "diode"] }),
    doneReadingId: text("done_reading_id"),
    createdAt: createdAt(),
  },
  (t) => [index("run_notes_run").on(t.runId, t.createdAt)],
);

// In-app notices for one member (e.g. a lead asked to help on a run); unread ones show as a badge in the nav.
export const notices = sqliteTable(
  "notices",
  {
    id: text("id").primaryKey(),
    shopId: text("shop_id")
      .notNull()
      .references(() => shops.id, { onDelete: "cascade" }),
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
    shopId: text("shop_id")
      .notNull()
      .references(() => shops.id, { onDelete: "cascade" }),
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
    shopId: text("shop_id")
      .notNull()
      .references(() => shops.id, { onDelete: "cascade" }),
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
    shopId: text("shop_id")
      .notNull()
      .references(() => shops.id, { onDelete: "cascade" }),
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
    shopId: text("shop_id")
      .notNull()
      .references(() => shops.id, { onDelete: "cascade" }),
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
    shopId: text("shop_id")
      .notNull()
      .references(() => shops.id, { onDelete: "cascade" }),
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
    shopId: text("shop_id")
      .notNull()
      .references(() => shops.id, { onDelete: "cascade" }),
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
    createdAt: createdAt(),
  },
  (t) => [index("payments_invoice").on(t.invoiceId), index("payments_session").on(t.providerSessionId)],
);

// Provider webhook events already applied: a replayed delivery finds its id here and changes nothing.
export const webhookEvents = sqliteTable("webhook_events", {
  id: text("id").primaryKey(),
  type: text("type").notNull(),
  receivedAt: createdAt(),
});
