import path from "node:path";
import type { RouteConfigEntry } from "@react-router/dev/routes";
import { beforeAll, describe, expect, it, vi } from "vitest";

vi.hoisted(() => {
  // This file's stored photos go to a temporary folder (the storage module reads it when first imported).
  process.env.UPLOADS_DIR = require("node:fs").mkdtempSync(
    require("node:path").join(require("node:os").tmpdir(), "railwise-access-uploads-"),
  );
});

import routes from "~/routes";
import { createSession, sessionCookie } from "~/server/session.server";
import {
  ACCESS_TABLE,
  CALLERS,
  type Caller,
  createShopWorld,
  type Entry,
  recordIds,
  type World,
} from "../support/access-table";
import { call } from "../support/requests";

// Every route file × loader/action × caller (signed out, owner, lead, tech, desk) × own-shop and other-shop
// record ids, with the exact status expected, and no trace of the other shop in any reply.

type Flat = { file: string; path: string };
function flatten(entries: RouteConfigEntry[], prefix = ""): Flat[] {
  return entries.flatMap((e) => {
    const full = e.index ? prefix || "/" : e.path ? `${prefix}/${e.path}`.replace(/\/+/g, "/") : prefix;
    return [{ file: e.file, path: e.path || e.index ? full : "" }, ...flatten(e.children ?? [], full)];
  });
}
const FLAT = flatten(routes as RouteConfigEntry[]);

const ORIGIN = "http://railwise.test";
let a: World;
let b: World;

beforeAll(async () => {
  a = await createShopWorld("Quokka Repairs");
  b = await createShopWorld("Zebra Board Works");
}, 60_000);

function fill(pattern: string, params: Record<string, string>) {
  return pattern.replace(/:(\w+)/g, (_, k: string) => encodeURIComponent(params[k] ?? `missing-${k}`));
}

async function request(entry: Entry, caller: Caller, target: World, method: "GET" | "POST") {
  const params = entry.params?.(target) ?? {};
  const url = ORIGIN + fill(entry.url ?? entry.path, params) + (entry.query?.(target) ?? "");
  const headers: Record<string, string> = {};
  if (caller !== "anon") {
    if (entry.auth === "bearer") headers.Authorization = `Bearer ${a.bearer[caller]}`;
    else if (entry.freshSession)
      headers.Cookie = sessionCookie((await createSession(a.userIds[caller], a.shopId)).token).split(";")[0];
    else headers.Cookie = a.cookies[caller];
  }
  if (method === "GET") return { request: new Request(url, { headers }), params };
  headers["Content-Type"] = "application/x-www-form-urlencoded";
  const body = new URLSearchParams(entry.action?.body?.(target) ?? {});
  return { request: new Request(url, { method, headers, body }), params };
}

async function bodyText(res: Awaited<ReturnType<typeof call>>) {
  if (typeof res.data === "string") return res.data;
  if (res.data !== undefined) return JSON.stringify(res.data) ?? "";
  return res.response ? await res.response.clone().text() : "";
}

const files = [...new Set(FLAT.map((r) => r.file))];

describe("the access table covers the route config", () => {
  it("has an entry for every route file and none for files no longer routed", () => {
    expect(Object.keys(ACCESS_TABLE).sort()).toEqual([...files].sort());
  });

  it.each(files)("%s: the entry's path and functions match the module", async (file) => {
    const entry = ACCESS_TABLE[file];
    expect(entry, `no access entry for ${file}`).toBeDefined();
    const routed = FLAT.find((r) => r.file === file)!;
    expect(entry.path).toBe(routed.path);
    const mod = await import(path.resolve(import.meta.dirname, "../../app", file));
    expect(typeof mod.loader === "function", `${file} loader vs entry`).toBe(!!entry.loader);
    expect(typeof mod.action === "function", `${file} action vs entry`).toBe(!!entry.action);
  });
});

type Case = { file: string; fn: "loader" | "action"; caller: Caller; shop: "own" | "other" };
const CASES: Case[] = Object.entries(ACCESS_TABLE).flatMap(([file, entry]) =>
  (["loader", "action"] as const).flatMap((fn) =>
    entry[fn]
      ? CALLERS.flatMap((caller) =>
          ((entry.params && !entry.tokenKeyed) || entry[fn]?.other
            ? (["own", "other"] as const)
            : (["own"] as const)
          ).map((shop) => ({ file, fn, caller, shop })),
        )
      : [],
  ),
);

describe("access matrix", () => {
  it.each(CASES)("$file $fn as $caller with $shop-shop ids", async ({ file, fn, caller, shop }) => {
    const entry = ACCESS_TABLE[file];
    const cell = entry[fn]!;
    const expected = shop === "own" ? cell.own[caller] : (cell.other ?? cell.own)[caller];
    const mod = await import(path.resolve(import.meta.dirname, "../../app", file));
    const target = shop === "own" ? a : b;
    const res = await call(mod[fn], await request(entry, caller, target, fn === "loader" ? "GET" : "POST"));
    const text = await bodyText(res);
    expect(res.status, `${fn} ${entry.path} as ${caller} (${shop}): ${text.slice(0, 200)}`).toBe(expected);
    // Whatever the status, nothing of the other shop comes back to a member of this one.
    expect(text).not.toContain(b.name);
    for (const id of recordIds(b)) expect(text).not.toContain(id);
    if (entry.auth !== "bearer" && caller !== "anon" && res.response)
      expect(res.response.headers.get("Location") ?? "").not.toContain(b.shopId);
  });
});
