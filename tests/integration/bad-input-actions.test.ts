import { parse } from "csv-parse/sync";
import fc from "fast-check";
import { beforeAll, describe, expect, it, vi } from "vitest";

vi.hoisted(() => {
  // This file's stored photos go to a temporary folder (the storage module reads it when first imported).
  process.env.UPLOADS_DIR = require("node:fs").mkdtempSync(
    require("node:path").join(require("node:os").tmpdir(), "railwise-bad-actions-uploads-"),
  );
});

import { parseInsightsFilter } from "~/lib/insights-filters";
import { fileExtension } from "~/lib/upload-names";
import * as forgot from "~/routes/forgot-password";
import * as invite from "~/routes/invite";
import * as jobRoute from "~/routes/job";
import * as login from "~/routes/login";
import * as mapPhotos from "~/routes/map-photos";
import * as quotePublic from "~/routes/quote-public";
import * as reset from "~/routes/reset-password";
import * as runRoute from "~/routes/run";
import * as tokens from "~/routes/settings-tokens";
import * as signup from "~/routes/signup";
import { type FlatTable, toCsv } from "~/server/insights-tables.server";
import { createShopWorld, type World } from "../support/access-table";
import { call, formRequest } from "../support/requests";
import { answerText, tableCounts } from "../support/db-counts";

// The actions the first bad-input file does not fuzz: sign-in and account pages, the customer's quote page,
// job and run intents, API-token creation, upload names and types, the insights filter parser and the CSV
// export. Every refusal is a 4xx with words in it and leaves every table as it was.

let w: World;
beforeAll(async () => {
  w = await createShopWorld("Fuzz Bench Two");
}, 60_000);

/** Row counts of every table except `skip` (e.g. the sign-in throttle's own records). */
const counts = tableCounts;
const text = answerText;
const expectMessage = (body: string) => expect(body).toMatch(/[A-Za-z]{3,}.*[A-Za-z]{3,}/);

const value = fc.oneof(
  fc.string({ maxLength: 40 }),
  fc.string({ unit: "grapheme", maxLength: 20 }),
  fc.integer().map(String),
  fc.constantFrom("", " ", "-1", "0", "1e309", "NaN", "null", "[]", "<script>", "'; drop table jobs;--"),
  fc.constant("x".repeat(3000)),
);
const body = (keys: string[], fixed: Record<string, fc.Arbitrary<string>> = {}) =>
  fc
    .tuple(fc.dictionary(fc.constantFrom(...keys), value, { maxKeys: keys.length }), fc.record(fixed))
    .map(([rest, pinned]) => ({ ...rest, ...pinned }) as Record<string, string>);

type Case = {
  // biome-ignore lint/suspicious/noExplicitAny: route functions have generated per-route argument types
  action: (args: any) => unknown;
  path: string;
  params?: Record<string, string>;
  cookie?: string;
  context?: unknown;
};

/**
 * Sends `fields` and checks: never a server error; a refusal names the problem and writes nothing (outside
 * `skip`); with `always4xx`, every body must be refused.
 */
let last: Awaited<ReturnType<typeof call>>;
async function expectRefusedOrHandled(
  c: Case,
  fields: Record<string, string>,
  opts: { always4xx?: boolean; skip?: string[] } = {},
): Promise<void> {
  const before = await counts(opts.skip);
  const res = await call(c.action, {
    request: formRequest(c.path, fields, c.cookie),
    params: c.params ?? {},
    context: c.context ?? {},
  });
  const what = `${c.path} ${JSON.stringify(fields).slice(0, 200)} → ${res.status}`;
  expect(res.status, what).toBeLessThan(500);
  if (opts.always4xx) expect(res.status, what).toBeGreaterThanOrEqual(400);
  if (res.status >= 400) {
    expectMessage(await text(res));
    expect(await counts(opts.skip), what).toEqual(before);
  }
  // fast-check fails a property that returns anything but true or undefined, so the reply is kept aside.
  last = res;
}

const THROTTLE = ["sign_in_failures"];
// Random strings are never a valid address; a few real-looking ones make the property reach the later checks.
const notAnEmail = fc.string({ maxLength: 60 }).filter((s) => !/^[^@\s]+@[^@\s]+\.[^@\s]+$/.test(s));

describe("sign-in and account actions", () => {
  it("sign-in: any body is refused (400, or 429 once throttled), writing only the throttle's own record", async () => {
    await fc.assert(
      fc.asyncProperty(
        body(["password", "redirectTo", "website"], {
          email: fc.oneof(notAnEmail, fc.emailAddress(), fc.constant(`owner-${w.shopId}@fixture.test`)),
        }),
        (fields) =>
          expectRefusedOrHandled(
            { action: login.action, path: "/login", context: { clientAddress: "192.0.2.10" } },
            fields,
            { always4xx: true, skip: THROTTLE },
          ),
      ),
      { numRuns: 25 },
    );
  });

  it("sign-up: a malformed address or a short password is refused and no user or shop is created", async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.oneof(
          body(["name", "shopName", "password", "website"], { email: notAnEmail }),
          body(["name", "shopName", "website"], {
            email: fc.emailAddress(),
            password: fc.string({ maxLength: 11 }),
          }),
        ),
        (fields) =>
          expectRefusedOrHandled(
            { action: signup.action, path: "/signup", context: { clientAddress: "192.0.2.11" } },
            fields,
            { always4xx: true, skip: THROTTLE },
          ),
      ),
      { numRuns: 25 },
    );
  });

  it("forgot password: any body gets the same answer or a field error, and no mail leaves for unknown addresses", async () => {
    await fc.assert(
      fc.asyncProperty(
        body(["website"], { email: fc.oneof(notAnEmail, fc.emailAddress()) }),
        async (fields) => {
          const before = await counts(THROTTLE);
          await expectRefusedOrHandled(
            { action: forgot.action, path: "/forgot-password", context: { clientAddress: "192.0.2.12" } },
            fields,
            { skip: THROTTLE },
          );
          const res = last;
          // A 200 is the "if that address has an account" answer: nothing else is written for strangers.
          expect(await counts(THROTTLE)).toEqual(before);
          if (res.status === 200) expect((res.data as { sent: boolean }).sent).toBe(true);
        },
      ),
      { numRuns: 25 },
    );
  });

  it("reset password and invitation: any body to an unknown link is refused and changes nothing", async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.string({ minLength: 1, maxLength: 60 }),
        body(["password", "confirm", "name", "website"]),
        async (token, fields) => {
          await expectRefusedOrHandled(
            { action: reset.action, path: `/reset-password/${encodeURIComponent(token)}`, params: { token } },
            fields,
            { always4xx: true },
          );
          await expectRefusedOrHandled(
            {
              action: invite.action,
              path: `/invite/${encodeURIComponent(token)}`,
              params: { token },
              context: { clientAddress: "192.0.2.13" },
            },
            fields,
            { always4xx: true, skip: THROTTLE },
          );
        },
      ),
      { numRuns: 25 },
    );
  });
});

describe("the customer's quote page (/q/:token)", () => {
  it("refuses any body to an unknown token with 404 and writes nothing", async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.string({ minLength: 1, maxLength: 60 }).filter((t) => t !== w.quoteToken),
        body(["amount"], { intent: fc.oneof(fc.constantFrom("approve", "decline", "pay"), value) }),
        async (token, fields) => {
          await expectRefusedOrHandled(
            { action: quotePublic.action, path: `/q/${encodeURIComponent(token)}`, params: { token } },
            fields,
            { always4xx: true },
          );
          expect(last.status).toBe(404);
        },
      ),
      { numRuns: 25 },
    );
  });

  it("refuses unknown intents, and payment before approval, on the real link, writing nothing", async () => {
    await fc.assert(
      fc.asyncProperty(
        body(["amount", "to", "status"], {
          intent: fc.oneof(
            fc.constant("pay"),
            value.filter((v) => !["approve", "decline", "pay"].includes(v)),
          ),
        }),
        (fields) =>
          expectRefusedOrHandled(
            { action: quotePublic.action, path: `/q/${w.quoteToken}`, params: { token: w.quoteToken } },
            fields,
            { always4xx: true },
          ),
      ),
      { numRuns: 25 },
    );
  });
});

describe("job intents", () => {
  const job = (cookie: string): Case => ({
    action: jobRoute.action,
    path: `/jobs/${w.jobId}`,
    params: { jobId: w.jobId },
    cookie,
  });

  it("reveal-passcode: refused for a job without one, whoever asks and whatever else is sent", async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.constantFrom("owner", "lead", "tech", "desk" as const),
        body(["passcode", "userId"], { intent: fc.constant("reveal-passcode") }),
        (role, fields) => expectRefusedOrHandled(job(w.cookies[role]), fields, { always4xx: true }),
      ),
      { numRuns: 20 },
    );
  });

  it("email-update: an update kind that does not exist is refused and nothing is sent", async () => {
    await fc.assert(
      fc.asyncProperty(
        body(["message", "to"], {
          intent: fc.constant("email-update"),
          kind: value.filter((k) => k !== "received" && k !== "ready"),
        }),
        (fields) => expectRefusedOrHandled(job(w.cookies.desk), fields, { always4xx: true }),
      ),
      { numRuns: 20 },
    );
  });

  it("raise-invoice and online-payment: refusals write nothing; a second invoice is never raised", async () => {
    // One real invoice first, so the fuzzed second ones must all be refused.
    const first = await call(jobRoute.action, {
      request: formRequest(`/jobs/${w.jobId}`, { intent: "raise-invoice" }, w.cookies.owner),
      params: { jobId: w.jobId },
    });
    expect(first.status).toBe(302);
    await fc.assert(
      fc.asyncProperty(
        fc.constantFrom("owner", "desk", "tech" as const),
        body(["amount", "method", "quoteId"], { intent: fc.constant("raise-invoice") }),
        (role, fields) => expectRefusedOrHandled(job(w.cookies[role]), fields, { always4xx: true }),
      ),
      { numRuns: 15 },
    );
    await fc.assert(
      fc.asyncProperty(
        body(["method"], {
          intent: fc.constant("online-payment"),
          // Not a money amount, or more than any balance: always refused.
          amount: fc.oneof(
            value.filter((v) => !/^\s*\$?\d/.test(v)),
            fc.integer({ min: 1_000_000, max: 2_000_000_000 }).map(String),
          ),
        }),
        (fields) => expectRefusedOrHandled(job(w.cookies.owner), fields, { always4xx: true }),
      ),
      { numRuns: 20 },
    );
  });
});

describe("run intents", () => {
  const run = (cookie: string): Case => ({
    action: runRoute.action,
    path: `/runs/${w.runId}`,
    params: { runId: w.runId },
    cookie,
  });
  const blank = fc.constantFrom("", " ", "\n\t ");

  it("note, lead-note and lead-step: an empty note, a missing net or a bad mode is refused, writing nothing", async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.oneof(
          body(["netId", "mode"], { intent: fc.constantFrom("note", "lead-note"), text: blank }),
          body(["text"], {
            intent: fc.constant("lead-step"),
            netId: fc.string({ maxLength: 30 }),
            mode: value.filter((m) => !["voltage", "resistance", "diode"].includes(m)),
          }),
          body(["netId", "mode"], { intent: fc.constant("lead-step"), text: blank }),
          fc.record({ intent: fc.constant("note"), text: fc.constant("y".repeat(2001)) }),
        ),
        fc.constantFrom("tech", "lead" as const),
        (fields, role) => expectRefusedOrHandled(run(w.cookies[role]), fields, { always4xx: true }),
      ),
      { numRuns: 30 },
    );
  });

  it("note, lead-note and lead-step: any other body is a handled answer, never a server error", async () => {
    await fc.assert(
      fc.asyncProperty(
        body(["text", "netId", "mode"], { intent: fc.constantFrom("note", "lead-note", "lead-step") }),
        fc.constantFrom("tech", "lead", "desk" as const),
        (fields, role) => expectRefusedOrHandled(run(w.cookies[role]), fields),
      ),
      { numRuns: 30 },
    );
  });
});

describe("API-token creation", () => {
  it("an empty or over-long name is refused and no token is made; other names are a handled answer", async () => {
    const tokensCase = (cookie: string): Case => ({
      action: tokens.action,
      path: "/settings/tokens",
      cookie,
    });
    await fc.assert(
      fc.asyncProperty(
        fc.oneof(
          fc.constantFrom("", "   "),
          fc.string({ minLength: 81, maxLength: 200 }).filter((s) => s.trim().length > 80),
        ),
        (name) =>
          expectRefusedOrHandled(tokensCase(w.cookies.tech), { intent: "create", name }, { always4xx: true }),
      ),
      { numRuns: 15 },
    );
    await fc.assert(
      fc.asyncProperty(body(["name", "tokenId"], { intent: value }), (fields) =>
        expectRefusedOrHandled(tokensCase(w.cookies.desk), fields),
      ),
      { numRuns: 20 },
    );
  });
});

describe("upload metadata", () => {
  // A real 1×1 PNG (ISO/IEC 15948 §5.2 signature, then IHDR, IDAT, IEND).
  const PNG = Buffer.from(
    "iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mP8z8BQDwAEhQGAhKmMIQAAAABJRU5ErkJggg==",
    "base64",
  );

  it("any file name and declared type: stored only when the name ends in .png, otherwise 415 and nothing written", async () => {
    await fc.assert(
      fc.asyncProperty(
        // Path separators, quotes and line breaks are escaped differently by each multipart encoder: left out.
        fc
          .oneof(
            fc.string({ maxLength: 60 }),
            fc.string({ maxLength: 20 }).map((s) => `${s}.png`),
            fc
              .tuple(
                fc.string({ maxLength: 20 }),
                fc.constantFrom("jpg", "txt", "svg", "PNG", "png.exe", "html"),
              )
              .map(([s, e]) => `${s}.${e}`),
          )
          .filter((n) => !/[\\/"\r\n]/.test(n)),
        fc.oneof(fc.string({ maxLength: 40 }), fc.constantFrom("image/png", "image/jpeg", "text/html", "")),
        async (name, type) => {
          const form = new FormData();
          form.append("photo", new File([new Uint8Array(PNG)], name, { type }));
          const before = await counts();
          const res = await call(mapPhotos.action, {
            request: new Request(`http://railwise.test/maps/${w.mapId}/photos`, {
              method: "POST",
              body: form,
              headers: { Cookie: w.cookies.lead },
            }),
            params: { mapId: w.mapId },
          });
          const what = JSON.stringify({ name, type });
          if (name.trim() === "") {
            // A part without a file name: refused as missing (400) or, when the encoder still sends it as a
            // file, as a name that does not say PNG (415); either way with a message and nothing written.
            expect([400, 415], what).toContain(res.status);
          } else if (fileExtension(name.trim()) === "png") {
            // (The multipart encoder trims spaces around a file name: " .png" arrives as ".png", no extension.)
            expect(res.status, what).toBe(200);
            return;
          } else expect(res.status, what).toBe(415);
          expectMessage(await text(res));
          expect(await counts()).toEqual(before);
        },
      ),
      { numRuns: 40 },
    );
  });
});

describe("insights filter parser", () => {
  it("never throws; keeps only valid values, with a message for each field it drops, and a sane date range", () => {
    const key = fc.constantFrom("from", "to", "board", "version", "tech", "outcome", "other");
    fc.assert(
      fc.property(
        fc.array(
          fc.tuple(
            key,
            fc.oneof(
              value,
              fc.date({ noInvalidDate: true }).map((d) => d.toISOString().slice(0, 10)),
            ),
          ),
          {
            maxLength: 8,
          },
        ),
        (pairs) => {
          const { filter, errors } = parseInsightsFilter(new URLSearchParams(pairs), Date.UTC(2026, 5, 1));
          for (const m of Object.values(errors)) expectMessage(m);
          expect(filter.from).toMatch(/^\d{4}-\d{2}-\d{2}$/);
          expect(filter.to).toMatch(/^\d{4}-\d{2}-\d{2}$/);
          expect(Number.isFinite(filter.fromMs)).toBe(true);
          expect(Number.isFinite(filter.toMs)).toBe(true);
        },
      ),
      { numRuns: 300 },
    );
  });
});

describe("CSV export", () => {
  it("any table parses back with csv-parse to the same cells (formula-like text carries its leading apostrophe)", () => {
    const cell = fc.oneof(
      fc.string({ maxLength: 30 }),
      fc.string({ unit: "grapheme", maxLength: 10 }),
      fc.constantFrom(
        "a,b",
        'say "hi"',
        "line\nbreak",
        "cr\r\nlf",
        "=SUM(A1)",
        "+1",
        "-2",
        "@x",
        "\tt",
        " lead",
      ),
      fc.integer(),
      fc.double({ noNaN: true, noDefaultInfinity: true }),
      fc.constant(null),
    );
    fc.assert(
      fc.property(
        fc
          .integer({ min: 1, max: 6 })
          .chain((n) =>
            fc.tuple(
              fc.array(fc.string({ minLength: 1, maxLength: 12 }), { minLength: n, maxLength: n }),
              fc.array(fc.array(cell, { minLength: n, maxLength: n }), { maxLength: 8 }),
            ),
          ),
        ([headers, rows]) => {
          const table: FlatTable = {
            columns: headers.map((header, i) => ({ key: `k${i}`, header })),
            rows: rows.map((r) => Object.fromEntries(r.map((v, i) => [`k${i}`, v]))),
          };
          const parsed = parse(toCsv(table), { relax_column_count: false, bom: false }) as string[][];
          expect(parsed[0]).toEqual(headers);
          const expected = rows.map((r) =>
            r.map((v) =>
              v === null ? "" : typeof v === "string" ? (/^[=+\-@\t\r]/.test(v) ? `'${v}` : v) : String(v),
            ),
          );
          expect(parsed.slice(1)).toEqual(expected);
        },
      ),
      { numRuns: 300 },
    );
  });
});
