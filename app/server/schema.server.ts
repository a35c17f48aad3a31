import { sql } from "drizzle-orm";
import { blob, index, integer, sqliteTable, text, uniqueIndex } from "drizzle-orm/sqlite-core";

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
    createdAt: createdAt(),
  },
  (t) => [
    uniqueIndex("jobs_shop_number").on(t.shopId, t.number),
    index("jobs_shop_state").on(t.shopId, t.state),
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
    startedAt: createdAt(),
    isolatedAt: integer("isolated_at", { mode: "timestamp_ms" }),
    closedAt: integer("closed_at", { mode: "timestamp_ms" }),
  },
  (t) => [
    index("runs_shop_board").on(t.shopId, t.boardId, t.startedAt),
    index("runs_version").on(t.mapVersionId),
    index("runs_job").on(t.jobId),
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
    takenBy: text("taken_by").notNull(),
    takenAt: createdAt(),
  },
  (t) => [
    uniqueIndex("readings_run_seq").on(t.runId, t.seq),
    index("readings_shop_net").on(t.shopId, t.netId),
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
    createdAt: createdAt(),
  },
  (t) => [index("findings_shop_board_node").on(t.shopId, t.boardId, t.nodeId)],
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
