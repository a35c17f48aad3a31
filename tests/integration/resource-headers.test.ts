import path from "node:path";
import type { RouteConfigEntry } from "@react-router/dev/routes";
import { beforeAll, describe, expect, it, vi } from "vitest";

vi.hoisted(() => {
  process.env.UPLOADS_DIR = require("node:fs").mkdtempSync(
    require("node:path").join(require("node:os").tmpdir(), "railwise-headers-uploads-"),
  );
});

import routes from "~/routes";
import { createSession, sessionCookie } from "~/server/session.server";
import { RESOURCE_CSP } from "~/server/security-headers.server";
import { ACCESS_TABLE, type Caller, createShopWorld, type World } from "../support/access-table";
import { call } from "../support/requests";

// Resource routes (no page component) skip entry.server, where documents get their headers. Every one of
// them, found from the route config (a new one is walked without being listed), must answer with nosniff and a
// policy that loads nothing and forbids framing, whatever it returns or throws: files, exports, JSON,
// redirects, refusals.

const files = (function flatten(entries: RouteConfigEntry[]): string[] {
  return entries.flatMap((e) => [e.file, ...flatten(e.children ?? [])]);
})(routes as RouteConfigEntry[]);

type Mod = { default?: unknown; loader?: unknown; action?: unknown };
const load = (file: string) => import(path.resolve(import.meta.dirname, "../../app", file)) as Promise<Mod>;

let w: World;
let resourceFiles: string[];
beforeAll(async () => {
  w = await createShopWorld("Header Works");
  resourceFiles = [];
  for (const f of files) if (!(await load(f)).default) resourceFiles.push(f);
}, 60_000);

const ORIGIN = "http://railwise.test";
async function requestFor(file: string, fn: "loader" | "action", caller: Caller) {
  const entry = ACCESS_TABLE[file];
  const params = entry.params?.(w) ?? {};
  const url =
    ORIGIN +
    (entry.url ?? entry.path).replace(/:(\w+)/g, (_, k: string) => encodeURIComponent(params[k] ?? "x")) +
    (entry.query?.(w) ?? "");
  const headers: Record<string, string> = {};
  if (caller !== "anon") {
    if (entry.auth === "bearer") headers.Authorization = `Bearer ${w.bearer[caller]}`;
    else
      headers.Cookie = sessionCookie((await createSession(w.userIds[caller], w.shopId)).token).split(";")[0];
  }
  if (fn === "loader") return { request: new Request(url, { headers }), params };
  headers["Content-Type"] = "application/x-www-form-urlencoded";
  const body = new URLSearchParams(entry.action?.body?.(w) ?? {});
  return { request: new Request(url, { method: "POST", headers, body }), params };
}

describe("resource route headers", () => {
  it("finds the resource routes (the walk below is not empty)", () => {
    expect(resourceFiles).toEqual(
      expect.arrayContaining(["routes/customer-export.ts", "routes/upload-file.ts", "routes/map-photos.ts"]),
    );
  });

  it("sends nosniff and a load-nothing, no-framing policy on every answer of every resource route", async () => {
    let checked = 0;
    for (const file of resourceFiles) {
      const mod = await load(file);
      for (const fn of ["loader", "action"] as const) {
        if (typeof mod[fn] !== "function") continue;
        for (const caller of ["anon", "owner", "desk"] as const) {
          const res = await call(mod[fn] as never, await requestFor(file, fn, caller));
          const where = `${file} ${fn} as ${caller} (${res.status})`;
          expect(res.response, `${where} returned a bare object`).toBeDefined();
          const h = res.response!.headers;
          expect(h.get("X-Content-Type-Options"), where).toBe("nosniff");
          expect(h.get("Content-Security-Policy"), where).toMatch(/default-src 'none'/);
          expect(h.get("Content-Security-Policy"), where).toMatch(/frame-ancestors 'none'/);
          expect(h.get("Strict-Transport-Security"), `${where}: no HSTS on plain http`).toBeNull();
          checked++;
        }
      }
    }
    expect(checked).toBeGreaterThan(30);
  });

  it("keeps a route's stricter policy (stored uploads are sandboxed) and adds framing to it", async () => {
    const mod = await load("routes/upload-file.ts");
    const res = await call(mod.loader as never, await requestFor("routes/upload-file.ts", "loader", "owner"));
    expect(res.status).toBe(200);
    expect(res.response!.headers.get("Content-Security-Policy")).toBe(
      "default-src 'none'; sandbox; frame-ancestors 'none'",
    );
  });

  it("gives the customer export (a download of personal data) the file policy", async () => {
    const mod = await load("routes/customer-export.ts");
    const res = await call(
      mod.loader as never,
      await requestFor("routes/customer-export.ts", "loader", "owner"),
    );
    expect(res.status).toBe(200);
    expect(res.response!.headers.get("Content-Security-Policy")).toBe(RESOURCE_CSP);
    expect(res.response!.headers.get("X-Content-Type-Options")).toBe("nosniff");
    expect(res.response!.headers.get("Content-Disposition")).toMatch(/^attachment;/);
  });
});
