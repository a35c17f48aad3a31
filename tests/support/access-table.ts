// The access matrix: for every route file in app/routes.ts, who may call its loader and action, and what each
// caller gets back. Written by hand from app/lib/permissions.ts and the route code (not derived from either),
// so a changed permission or a forgotten guard shows up as a failing cell.
import { OM_5150_MAP } from "../../seed/maps/om-5150";
import { db } from "~/server/db.server";
import { createApiToken } from "~/server/api-tokens.server";
import { storeJobPhoto } from "~/server/job-photos.server";
import { createJob } from "~/server/jobs.server";
import { createQuote, issueQuoteLink } from "~/server/quotes.server";
import { jobPhotos, jobs, members, type Role, shops, uploads } from "~/server/schema.server";
import { and, eq } from "drizzle-orm";
import { createShopWithRoles } from "./fixtures";
import { publishDemoMap, startRun } from "./runs";

export const ROLES = ["owner", "lead", "tech", "desk"] as const;
export type Caller = "anon" | Role;
export const CALLERS: Caller[] = ["anon", ...ROLES];

// A 1×1 PNG (signature 89 50 4E 47 0D 0A 1A 0A, ISO/IEC 15948 §5.2, then IHDR, IDAT, IEND).
const PNG = Buffer.from(
  "iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mP8z8BQDwAEhQGAhKmMIQAAAABJRU5ErkJggg==",
  "base64",
);

/** One shop with a record of every kind a route can be asked about. */
export async function createShopWorld(name: string) {
  const shop = await createShopWithRoles(name);
  const { mapId, versionId } = await publishDemoMap(shop.shopId, shop.boardId, OM_5150_MAP);
  const runId = await startRun(shop.cookies.tech, { boardId: shop.boardId, mapVersionId: versionId });
  const shopRow = (await db.select().from(shops).where(eq(shops.id, shop.shopId)).get())!;
  const job = await createJob(shop.shopId, shop.userIds.desk, {
    customer: {
      name: `Customer of ${name}`,
      email: `cust-${shop.shopId}@customer.test`,
      consentToContact: true,
    },
    boardId: shop.boardId,
    serial: `SN-${shop.shopId}`,
    conditionNotes: "",
    accessories: "",
    complaint: "No power",
    diagnosticFeeMinor: 4500,
    unclaimedDays: 60,
  });
  const jobId = job.id;
  const jobRow = (await db.select().from(jobs).where(eq(jobs.id, jobId)).get())!;
  await storeJobPhoto(shop.shopId, jobId, shop.userIds.desk, { bytes: PNG, type: "image/png" });
  const photo = (await db.select().from(jobPhotos).where(eq(jobPhotos.jobId, jobId)).get())!;
  const upload = (await db.select().from(uploads).where(eq(uploads.id, photo.uploadId)).get())!;
  const quote = await createQuote(shopRow, jobId, shop.userIds.desk, {
    lines: [{ kind: "labour", description: "Bench labour", quantity: 1, unitMinor: 10000 }],
    depositMinor: 0,
    note: "",
    findingId: null,
  });
  const { token: quoteToken } = await issueQuoteLink(quote);
  const bearer = {} as Record<Role, string>;
  for (const role of ROLES) {
    const m = (await db
      .select()
      .from(members)
      .where(and(eq(members.shopId, shop.shopId), eq(members.userId, shop.userIds[role])))
      .get())!;
    bearer[role] = (
      await createApiToken({
        shopId: shop.shopId,
        memberId: m.id,
        userId: shop.userIds[role],
        name: "matrix",
      })
    ).token;
  }
  return {
    ...shop,
    name,
    mapId,
    versionId,
    runId,
    jobId,
    customerId: jobRow.customerId ?? "missing-customer",
    photoId: photo.id,
    uploadId: upload.id,
    quoteToken,
    bearer,
  };
}
export type World = Awaited<ReturnType<typeof createShopWorld>>;

/** Record ids a route may be asked about; the matrix checks another shop's never appear in a reply. */
export const recordIds = (w: World) => [
  w.shopId,
  w.boardId,
  w.mapId,
  w.versionId,
  w.runId,
  w.jobId,
  w.customerId,
  w.photoId,
  w.uploadId,
];

type Status = 200 | 302 | 400 | 401 | 403 | 404 | 405 | 409;
/** Expected status per caller; `other` is the status when the ids belong to another shop (omitted: same as own). */
export type Cell = { own: Record<Caller, Status>; other?: Record<Caller, Status> };

/** A guarded route: allowed roles get `ok` (own) / `foreign` (other shop), refused roles 403, signed out 302. */
function guarded(allowed: Role[], ok: Status, foreign?: Status): Cell {
  const row = (s: Status) =>
    Object.fromEntries(CALLERS.map((c) => [c, c === "anon" ? 302 : allowed.includes(c) ? s : 403])) as Record<
      Caller,
      Status
    >;
  return { own: row(ok), ...(foreign ? { other: row(foreign) } : {}) };
}
/** The same answer for everyone, signed in or not. */
const everyone = (s: Status): Cell => ({
  own: Object.fromEntries(CALLERS.map((c) => [c, s])) as Record<Caller, Status>,
});
/** Public pages that send a signed-in member on to their boards. */
const guestOnly: Cell = { own: { anon: 200, owner: 302, lead: 302, tech: 302, desk: 302 } };

const badIntent = () => ({ intent: "no-such-intent" });
const ALL: Role[] = ["owner", "lead", "tech", "desk"];
const OWNER_LEAD: Role[] = ["owner", "lead"];

export type Entry = {
  /** The URL pattern in app/routes.ts. */
  path: string;
  /** The URL to call when the pattern is not one (layouts, the catch-all). */
  url?: string;
  /** Route params for a given shop's records. */
  params?: (w: World) => Record<string, string>;
  /** Query string appended to the URL. */
  query?: (w: World) => string;
  /** The record is reached by an unguessable token, not a shop's id: there is no "other shop" to try. */
  tokenKeyed?: boolean;
  /** The call ends the caller's session, so it gets a session of its own. */
  freshSession?: boolean;
  /** How a role authenticates: the session cookie (default) or a personal API token. */
  auth?: "cookie" | "bearer";
  loader?: Cell;
  /** The action gets a minimal body: empty unless given (built for the shop whose ids are used). */
  action?: Cell & { body?: (w: World) => Record<string, string> };
};

// Keyed by the route file as written in app/routes.ts.
export const ACCESS_TABLE: Record<string, Entry> = {
  "routes/landing.tsx": { path: "/", loader: guestOnly },
  "routes/login.tsx": { path: "/login", loader: guestOnly, action: everyone(400) },
  "routes/signup.tsx": { path: "/signup", loader: guestOnly, action: everyone(400) },
  // Signing out works (and is harmless) for anyone; the loader sends a stray GET home.
  "routes/logout.ts": { path: "/logout", freshSession: true, loader: everyone(302), action: everyone(302) },
  "routes/forgot-password.tsx": { path: "/forgot-password", action: everyone(400) },
  // A wrong token is answered with the "expired" page (200) and a refused form (400), never with data.
  "routes/reset-password.tsx": {
    path: "/reset-password/:token",
    tokenKeyed: true,
    params: () => ({ token: "not-a-real-token" }),
    loader: everyone(200),
    action: everyone(400),
  },
  "routes/invite.tsx": {
    path: "/invite/:token",
    tokenKeyed: true,
    params: () => ({ token: "not-a-real-token" }),
    loader: everyone(200),
    action: everyone(400),
  },
  "routes/healthz.ts": { path: "/healthz", loader: everyone(200) },
  "routes/theme.ts": { path: "/theme", action: everyone(400) },
  // The captured-mail outbox exists only while MAIL_CAPTURE is on (tests and local development).
  "routes/dev-outbox.tsx": { path: "/dev/outbox", loader: everyone(200) },
  "routes/dev-outbox-json.ts": { path: "/dev/outbox.json", loader: everyone(200) },
  // The customer's quote page: the token is the key, so every caller sees the same page.
  "routes/quote-public.tsx": {
    path: "/q/:token",
    tokenKeyed: true,
    params: (w) => ({ token: w.quoteToken }),
    loader: everyone(200),
    action: everyone(400),
  },
  // The webhook answers only signed POSTs; an unsigned one is refused whoever sends it.
  "routes/payments-webhook.ts": { path: "/payments/webhook", loader: everyone(405), action: everyone(400) },
  "routes/map-export.ts": {
    path: "/maps/:mapId/export",
    params: (w) => ({ mapId: w.mapId }),
    loader: guarded(ALL, 200, 404),
  },
  "routes/map-photos.ts": {
    path: "/maps/:mapId/photos",
    params: (w) => ({ mapId: w.mapId }),
    action: guarded(OWNER_LEAD, 400, 404),
  },
  // Any member may fetch their own shop's stored files (map photos are shown to every role).
  "routes/upload-file.ts": {
    path: "/uploads/:uploadId",
    params: (w) => ({ uploadId: w.uploadId }),
    loader: guarded(ALL, 200, 404),
  },
  "routes/insights-export.ts": {
    path: "/insights/export/:table",
    params: () => ({ table: "hot-spots.csv" }),
    loader: guarded(OWNER_LEAD, 200),
  },
  // Bearer tokens only: no token is 401 (a session cookie is not accepted), a token whose role may not read
  // insights is 403; the action is a read-only notice.
  "routes/api-v1-insights.ts": {
    path: "/api/v1/insights/:table",
    params: () => ({ table: "hot-spots" }),
    auth: "bearer",
    loader: { own: { anon: 401, owner: 200, lead: 200, tech: 403, desk: 403 } },
    action: everyone(405),
  },
  "routes/app-layout.tsx": { path: "", url: "/boards", loader: guarded(ALL, 200) },
  "routes/boards.tsx": { path: "/boards", loader: guarded(ALL, 200), action: guarded(OWNER_LEAD, 400) },
  "routes/board.tsx": {
    path: "/boards/:boardId",
    params: (w) => ({ boardId: w.boardId }),
    loader: guarded(ALL, 200, 404),
    // An unknown intent needs edit:boards; the board lookup comes after the role check.
    action: { ...guarded(OWNER_LEAD, 400, 404), body: badIntent },
  },
  "routes/map-editor.tsx": {
    path: "/maps/:mapId",
    params: (w) => ({ mapId: w.mapId }),
    loader: guarded(ALL, 200, 404),
    action: { ...guarded(OWNER_LEAD, 400, 404), body: badIntent },
  },
  "routes/map-compare.tsx": {
    path: "/maps/:mapId/compare",
    params: (w) => ({ mapId: w.mapId }),
    loader: guarded(ALL, 200, 404),
  },
  "routes/settings-meters.tsx": {
    path: "/settings/meters",
    loader: guarded(OWNER_LEAD, 200),
    action: { ...guarded(OWNER_LEAD, 400), body: badIntent },
  },
  "routes/runs.tsx": { path: "/runs", loader: guarded(ALL, 200) },
  "routes/runs-new.tsx": {
    path: "/runs/new",
    loader: guarded(["owner", "lead", "tech"], 200),
    action: guarded(["owner", "lead", "tech"], 400),
  },
  "routes/run.tsx": {
    path: "/runs/:runId",
    params: (w) => ({ runId: w.runId }),
    loader: guarded(ALL, 200, 404),
    // The body is checked before the run is looked up, so an invalid body is 400 for any run id.
    action: { ...guarded(["owner", "lead", "tech"], 400, 400), body: badIntent },
  },
  "routes/run-report.tsx": {
    path: "/runs/:runId/report",
    params: (w) => ({ runId: w.runId }),
    loader: guarded(ALL, 200, 404),
  },
  "routes/jobs.tsx": { path: "/jobs", loader: guarded(ALL, 200) },
  "routes/job-new.tsx": {
    path: "/jobs/new",
    loader: guarded(["owner", "lead", "desk"], 200),
    action: guarded(["owner", "lead", "desk"], 400),
  },
  "routes/job.tsx": {
    path: "/jobs/:jobId",
    params: (w) => ({ jobId: w.jobId }),
    loader: guarded(ALL, 200, 404),
    action: { ...guarded(ALL, 400, 404), body: badIntent },
  },
  "routes/job-tag.tsx": {
    path: "/jobs/:jobId/tag",
    params: (w) => ({ jobId: w.jobId }),
    loader: guarded(ALL, 200, 404),
  },
  "routes/job-quote.tsx": {
    path: "/jobs/:jobId/quote",
    params: (w) => ({ jobId: w.jobId }),
    loader: guarded(["owner", "lead", "desk"], 200, 404),
    // The fixture job is still at intake, so a quote is refused as out of turn (409) before the body is read.
    action: guarded(["owner", "lead", "desk"], 409, 404),
  },
  "routes/job-photo.ts": {
    path: "/jobs/:jobId/photos/:photoId",
    params: (w) => ({ jobId: w.jobId, photoId: w.photoId }),
    loader: guarded(ALL, 200, 404),
  },
  "routes/customer.tsx": {
    path: "/customers/:customerId",
    params: (w) => ({ customerId: w.customerId }),
    loader: guarded(["owner"], 200, 404),
    action: { ...guarded(["owner"], 400, 404), body: badIntent },
  },
  "routes/customer-export.ts": {
    path: "/customers/:customerId/export",
    params: (w) => ({ customerId: w.customerId }),
    loader: guarded(["owner"], 200, 404),
  },
  "routes/insights.tsx": { path: "/insights", loader: guarded(OWNER_LEAD, 200) },
  "routes/insights-map.tsx": {
    path: "/insights/map/:versionId",
    params: (w) => ({ versionId: w.versionId }),
    loader: guarded(OWNER_LEAD, 200, 404),
  },
  "routes/insights-runs.tsx": { path: "/insights/runs", loader: guarded(OWNER_LEAD, 200) },
  "routes/insights-parts.tsx": { path: "/insights/parts", loader: guarded(OWNER_LEAD, 200) },
  "routes/settings-tokens.tsx": {
    path: "/settings/tokens",
    loader: guarded(ALL, 200),
    action: { ...guarded(ALL, 400), body: badIntent },
  },
  "routes/settings.tsx": {
    path: "/settings",
    loader: guarded(["owner"], 200),
    action: { ...guarded(["owner"], 400), body: badIntent },
  },
  // Switching to one's own shop works; to a shop one is not a member of is 404; signed out is sent to sign in.
  "routes/switch-shop.ts": {
    path: "/switch-shop",
    loader: everyone(302),
    action: {
      own: everyone(302).own,
      other: { anon: 302, owner: 404, lead: 404, tech: 404, desk: 404 },
      body: (w) => ({ shopId: w.shopId }),
    },
  },
  "routes/not-found.tsx": { path: "/*", url: "/no-such-page", loader: everyone(404) },
};
