import { readdirSync } from "node:fs";
import fc from "fast-check";
import { beforeAll, describe, expect, it, vi } from "vitest";

const UPLOADS = vi.hoisted(() => {
  // This file's stored files go to a temporary folder (the storage module reads it when first imported).
  const dir = require("node:fs").mkdtempSync(
    require("node:path").join(require("node:os").tmpdir(), "railwise-bad-input-uploads-"),
  );
  process.env.UPLOADS_DIR = dir;
  return dir as string;
});

import * as authSchemas from "~/lib/auth-schemas";
import * as boardSchemas from "~/lib/board-schemas";
import * as boardRoute from "~/routes/board";
import * as boardsRoute from "~/routes/boards";
import * as customerRoute from "~/routes/customer";
import * as jobRoute from "~/routes/job";
import * as jobNew from "~/routes/job-new";
import * as jobQuote from "~/routes/job-quote";
import * as editor from "~/routes/map-editor";
import * as mapPhotos from "~/routes/map-photos";
import * as runRoute from "~/routes/run";
import * as runsNew from "~/routes/runs-new";
import * as settingsRoute from "~/routes/settings";
import * as metersRoute from "~/routes/settings-meters";
import * as tokensRoute from "~/routes/settings-tokens";
import * as themeRoute from "~/routes/theme";
import { createShopWorld, type World } from "../support/access-table";
import { call, formRequest } from "../support/requests";
import { answerText, tableCounts } from "../support/db-counts";
import { type Loaded, loadRun } from "../support/runs";

// Bad input gets a clear 4xx and changes nothing: arbitrary bodies to every action, odd reading text, huge and
// deeply nested map imports, and uploads that lie about what they are.

let w: World;
beforeAll(async () => {
  w = await createShopWorld("Bad Input Bench");
}, 60_000);

/** Row counts of every table, to prove a refused request wrote nothing. */
const counts = tableCounts;
const text = answerText;

/** A refusal names the problem in words (a message or a field error), not an empty body. */
function expectMessage(body: string) {
  expect(body).toMatch(/[A-Za-z]{3,}.*[A-Za-z]{3,}/);
}

const value = fc.oneof(
  fc.string({ maxLength: 40 }),
  fc.string({ unit: "grapheme", maxLength: 20 }),
  fc.integer().map(String),
  fc.double({ noNaN: false }).map(String),
  fc.constantFrom(
    "",
    " ",
    "-1",
    "0",
    "1e309",
    "NaN",
    "null",
    "[]",
    "{}",
    "<script>",
    "'; drop table runs;--",
  ),
  fc.constant("x".repeat(5000)),
);
const FIELDS = [
  "intent",
  "id",
  "name",
  "email",
  "text",
  "note",
  "netId",
  "mode",
  "expectedSeq",
  "revision",
  "changes",
  "json",
  "number",
  "boardId",
  "mapVersionId",
  "condition",
  "strategy",
  "maker",
  "model",
  "boardNumber",
  "phone",
  "serial",
  "complaint",
  "diagnosticFee",
  "role",
  "memberId",
  "tokenId",
  "theme",
  "lines",
  "amount",
  "outcome",
  "round",
  "fixId",
  "customerId",
  "state",
  "techId",
  "profileId",
  "inputType",
  "inputMillivolts",
];

type Target = {
  name: string;
  // biome-ignore lint/suspicious/noExplicitAny: route functions have generated per-route argument types
  action: (args: any) => unknown;
  path: (w: World) => string;
  params?: (w: World) => Record<string, string>;
  cookie: (w: World) => string;
  intents: string[];
};
const TARGETS: Target[] = [
  {
    name: "boards",
    action: boardsRoute.action,
    path: () => "/boards",
    cookie: (w) => w.cookies.lead,
    intents: [],
  },
  {
    name: "board",
    action: boardRoute.action,
    path: (w) => `/boards/${w.boardId}`,
    params: (w) => ({ boardId: w.boardId }),
    cookie: (w) => w.cookies.lead,
    intents: ["edit", "archive", "create-map"],
  },
  {
    name: "map editor",
    action: editor.action,
    path: (w) => `/maps/${w.mapId}`,
    params: (w) => ({ mapId: w.mapId }),
    cookie: (w) => w.cookies.lead,
    intents: ["save", "publish", "import", "draft-from-version"],
  },
  {
    name: "new run",
    action: runsNew.action,
    path: () => "/runs/new",
    cookie: (w) => w.cookies.tech,
    intents: [],
  },
  {
    name: "run",
    action: runRoute.action,
    path: (w) => `/runs/${w.runId}`,
    params: (w) => ({ runId: w.runId }),
    cookie: (w) => w.cookies.tech,
    intents: ["reading", "skip", "outcome", "help"],
  },
  {
    name: "new job",
    action: jobNew.action,
    path: () => "/jobs/new",
    cookie: (w) => w.cookies.desk,
    intents: [],
  },
  {
    name: "job",
    action: jobRoute.action,
    path: (w) => `/jobs/${w.jobId}`,
    params: (w) => ({ jobId: w.jobId }),
    cookie: (w) => w.cookies.owner,
    intents: ["move", "assign", "comeback", "send-quote", "counter-payment", "refund", "waive"],
  },
  {
    name: "job quote",
    action: jobQuote.action,
    path: (w) => `/jobs/${w.jobId}/quote`,
    params: (w) => ({ jobId: w.jobId }),
    cookie: (w) => w.cookies.desk,
    intents: [],
  },
  {
    name: "customer",
    action: customerRoute.action,
    path: (w) => `/customers/${w.customerId}`,
    params: (w) => ({ customerId: w.customerId }),
    cookie: (w) => w.cookies.owner,
    intents: ["edit", "erase", "delete"],
  },
  {
    name: "settings",
    action: settingsRoute.action,
    path: () => "/settings",
    cookie: (w) => w.cookies.owner,
    intents: ["shop", "invite", "change-role", "remove-member"],
  },
  {
    name: "meters",
    action: metersRoute.action,
    path: () => "/settings/meters",
    cookie: (w) => w.cookies.lead,
    intents: ["save", "create", "delete", "default"],
  },
  {
    name: "tokens",
    action: tokensRoute.action,
    path: () => "/settings/tokens",
    cookie: (w) => w.cookies.tech,
    intents: ["revoke"],
  },
  {
    name: "theme",
    action: themeRoute.action,
    path: () => "/theme",
    cookie: (w) => w.cookies.tech,
    intents: [],
  },
];

describe("arbitrary form bodies", () => {
  it.each(TARGETS)("$name: never a server error; a refusal has a message and writes nothing", async (t) => {
    const body = fc
      .tuple(
        fc.oneof(fc.constantFrom(...(t.intents.length ? t.intents : ["x"])), value),
        fc.dictionary(fc.constantFrom(...FIELDS), value, { maxKeys: 6 }),
      )
      .map(([intent, rest]) => ({ ...rest, ...(t.intents.length ? { intent } : {}) }));
    await fc.assert(
      fc.asyncProperty(body, async (fields) => {
        const before = await counts();
        const res = await call(t.action, {
          request: formRequest(t.path(w), fields, t.cookie(w)),
          params: t.params?.(w) ?? {},
        });
        expect(res.status, JSON.stringify(fields).slice(0, 300)).toBeLessThan(500);
        if (res.status >= 400) {
          expectMessage(await text(res));
          expect(await counts()).toEqual(before);
        }
      }),
      { numRuns: 25 },
    );
  });
});

describe("exported schemas", () => {
  const schemas = { ...authSchemas, ...boardSchemas } as Record<string, unknown>;
  const zodSchemas = Object.entries(schemas).filter(
    ([, s]) => typeof (s as { safeParse?: unknown })?.safeParse === "function",
  ) as Array<[string, { safeParse: (x: unknown) => { success: boolean; error?: { issues: unknown[] } } }]>;

  it.each(zodSchemas)("%s refuses anything malformed with issues, never throwing", (_name, schema) => {
    fc.assert(
      fc.property(fc.anything(), (input) => {
        const r = schema.safeParse(input);
        if (!r.success) expect(r.error!.issues.length).toBeGreaterThan(0);
      }),
      { numRuns: 200 },
    );
  });
});

describe("reading text on the walker", () => {
  it("takes any typed text as a reading or refuses it with a message, writing nothing", async () => {
    const run = (await loadRun(w.cookies.tech, w.runId)).data as Loaded;
    const step = run.view.step;
    let n = 0;
    await fc.assert(
      fc.asyncProperty(
        fc.oneof(
          fc.string({ maxLength: 80 }),
          fc.string({ unit: "grapheme", maxLength: 70 }),
          fc.constantFrom(
            "",
            "   ",
            "OL",
            "-OL",
            "3,3",
            "3.3.3",
            "1e400",
            "-0",
            "∞",
            "12 V",
            "450mV",
            "0x10",
          ),
        ),
        async (typed) => {
          const v = ((await loadRun(w.cookies.tech, w.runId)).data as Loaded).view;
          const before = await counts();
          const res = await call(runRoute.action, {
            request: formRequest(
              `/runs/${w.runId}`,
              {
                intent: "reading",
                id: `fuzz-reading-${n++}-${Date.now()}`,
                netId: step.netId,
                mode: step.mode,
                text: typed,
                expectedSeq: String(v.nextSeq),
              },
              w.cookies.tech,
            ),
            params: { runId: w.runId },
          });
          expect(res.status, JSON.stringify(typed)).toBeLessThan(500);
          if (res.status >= 400) {
            expectMessage(await text(res));
            expect(await counts()).toEqual(before);
          } else expect(res.status).toBe(200);
        },
      ),
      { numRuns: 60 },
    );
  });
});

describe("map import", () => {
  async function importJson(json: string) {
    const loaded = await call(editor.loader, {
      request: new Request(`http://railwise.test/maps/${w.mapId}`, { headers: { Cookie: w.cookies.lead } }),
      params: { mapId: w.mapId },
    });
    const revision = (loaded.data as { map: { revision: number } }).map.revision;
    const before = await counts();
    const res = await call(editor.action, {
      request: formRequest(
        `/maps/${w.mapId}`,
        { intent: "import", revision: String(revision), json },
        w.cookies.lead,
      ),
      params: { mapId: w.mapId },
    });
    return { res, before };
  }

  it("refuses arbitrary JSON-ish text with a message and leaves the draft alone", async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.oneof(
          fc.json({ maxDepth: 4 }),
          fc.string({ maxLength: 200 }),
          fc.jsonValue().map((v) => JSON.stringify({ nodes: v, edges: v })),
        ),
        async (json) => {
          const { res, before } = await importJson(json);
          expect(res.status).toBeLessThan(500);
          if (res.status >= 400) {
            expectMessage(await text(res));
            expect(await counts()).toEqual(before);
          }
        },
      ),
      { numRuns: 60 },
    );
  });

  it("answers a 10,000-node document with a 4xx or a saved draft, never a server error", async () => {
    const nodes = Array.from({ length: 10_000 }, (_, i) => ({
      id: `n${i}`,
      kind: "rail",
      name: `R${i}`,
      nominalV: 3.3,
      tolerancePct: 5,
      expected: { voltage: { nominal: 3.3, tolerancePct: 5 } },
    }));
    const edges = nodes.slice(1).map((n, i) => ({ id: `e${i}`, from: `n${i}`, to: n.id, kind: "feeds" }));
    const { res, before } = await importJson(
      JSON.stringify({ format: "railwise-map", version: 1, nodes, edges }),
    );
    expect(res.status).toBeLessThan(500);
    if (res.status >= 400) {
      expectMessage(await text(res));
      expect(await counts()).toEqual(before);
    }
  });

  it("refuses a deeply nested document (100,000 levels) with a 4xx and changes nothing", async () => {
    const depth = 100_000;
    for (const json of [
      "[".repeat(depth) + "]".repeat(depth),
      `${'{"a":'.repeat(depth)}1${"}".repeat(depth)}`,
    ]) {
      const { res, before } = await importJson(json);
      expect(res.status).toBeGreaterThanOrEqual(400);
      expect(res.status).toBeLessThan(500);
      expectMessage(await text(res));
      expect(await counts()).toEqual(before);
    }
  });

  it("refuses a document over the import limit with 413", async () => {
    const { res, before } = await importJson(`{"nodes":[${'"x",'.repeat(600_000)}"x"]}`);
    expect(res.status).toBe(413);
    expectMessage(await text(res));
    expect(await counts()).toEqual(before);
  });
});

describe("uploads", () => {
  // A real 1×1 PNG (ISO/IEC 15948 §5.2 signature, then IHDR, IDAT, IEND).
  const PNG = Buffer.from(
    "iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mP8z8BQDwAEhQGAhKmMIQAAAABJRU5ErkJggg==",
    "base64",
  );
  /** The same PNG with its IHDR claiming 100000×100000 pixels (width and height are bytes 16–23, big-endian). */
  const BOMB = Buffer.from(PNG);
  BOMB.writeUInt32BE(100_000, 16);
  BOMB.writeUInt32BE(100_000, 20);

  const storedFiles = () => readdirSync(UPLOADS, { recursive: true }).length;

  function photoRequest(bytes: Buffer, name: string, type: string) {
    const form = new FormData();
    form.append("photo", new File([new Uint8Array(bytes)], name, { type }));
    return new Request(`http://railwise.test/maps/${w.mapId}/photos`, {
      method: "POST",
      body: form,
      headers: { Cookie: w.cookies.lead },
    });
  }

  const lies: Array<[string, Buffer, string, string, number]> = [
    ["text named .png", Buffer.from("hello, I am not a picture\n".repeat(20)), "board.png", "image/png", 415],
    ["a script named .jpg", Buffer.from("<script>alert(1)</script>"), "board.jpg", "image/jpeg", 415],
    ["an oversize body", Buffer.concat([PNG, Buffer.alloc(9 * 1024 * 1024)]), "big.png", "image/png", 413],
    ["a 100000×100000 PNG header", BOMB, "tiny.png", "image/png", 422],
    ["an empty file", Buffer.alloc(0), "empty.png", "image/png", 400],
  ];

  it.each(lies)(
    "map photo: %s is refused and nothing is stored",
    async (_what, bytes, name, type, status) => {
      const before = await counts();
      const files = storedFiles();
      const res = await call(mapPhotos.action, {
        request: photoRequest(bytes, name, type),
        params: { mapId: w.mapId },
      });
      expect(res.status).toBe(status);
      expectMessage(await text(res));
      expect(await counts()).toEqual(before);
      expect(storedFiles()).toBe(files);
    },
  );

  it("map photo: a genuine small PNG is stored (the refusals above are not refusing everything)", async () => {
    const before = await counts();
    const res = await call(mapPhotos.action, {
      request: photoRequest(PNG, "pad.png", "image/png"),
      params: { mapId: w.mapId },
    });
    expect(res.status).toBe(200);
    expect((await counts()).uploads).toBe(before.uploads + 1);
  });

  it.each(lies.filter(([what]) => what !== "an empty file"))(
    "intake photo: %s is refused, no job is opened and nothing is stored",
    async (_what, bytes, name, type) => {
      const form = new FormData();
      const fields: Record<string, string> = {
        name: "Pia Photo",
        phone: "555-0111",
        serial: "PH-1",
        complaint: "Dead after a drop",
        diagnosticFee: "45.00",
        termsAccepted: "on",
      };
      for (const [k, v] of Object.entries(fields)) form.append(k, v);
      form.append("photos", new File([new Uint8Array(bytes)], name, { type }));
      const before = await counts();
      const files = storedFiles();
      const res = await call(jobNew.action, {
        request: new Request("http://railwise.test/jobs/new", {
          method: "POST",
          body: form,
          headers: { Cookie: w.cookies.desk },
        }),
      });
      expect(res.status).toBeGreaterThanOrEqual(400);
      expect(res.status).toBeLessThan(500);
      expectMessage(await text(res));
      expect(await counts()).toEqual(before);
      expect(storedFiles()).toBe(files);
    },
  );
});
