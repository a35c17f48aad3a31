import { createHash } from "node:crypto";
import { count, eq } from "drizzle-orm";
import { describe, expect, it, vi } from "vitest";

// Its own uploads folder: this test deletes the demo photo's bytes, which servers on data/uploads share.
await vi.hoisted(async () => {
  const { mkdtempSync } = await import("node:fs");
  const { tmpdir } = await import("node:os");
  const path = await import("node:path");
  process.env.UPLOADS_DIR = mkdtempSync(path.join(tmpdir(), "railwise-seed-uploads-"));
});
import { db } from "~/server/db.server";
import { boards, maps, mapVersions, members, shops, uploads, users } from "~/server/schema.server";
import { storage } from "~/server/storage.server";
import { DEMO_PHOTO_ID } from "../../seed/demo-photo-layout";
import { seedDemoProbePhoto } from "../../seed/demo-photo.server";
import { seedDemo } from "../../seed/demo.server";

describe("demo seed", () => {
  it("creates the invented shop with one member per role and is idempotent", async () => {
    const first = await seedDemo(db);
    expect(first.created).toBe(true);
    const counts = async () =>
      Promise.all(
        [shops, users, members, boards, maps, mapVersions].map(
          async (t) => (await db.select({ n: count() }).from(t).get())!.n,
        ),
      );
    const after1 = await counts();
    expect(after1).toEqual([1, 4, 4, 2, 2, 2]);
    const second = await seedDemo(db);
    expect(second.created).toBe(false);
    expect(await counts()).toEqual(after1);
    const roles = (await db.select({ role: members.role }).from(members).all()).map((r) => r.role).sort();
    expect(roles).toEqual(["desk", "lead", "owner", "tech"]);
  });

  it("stores the OM-5150 probe photo as an upload the published map points at, once", async () => {
    await seedDemo(db);
    expect(storage.describe()).toContain("railwise-seed-uploads-");
    const rows = await db.select().from(uploads).where(eq(uploads.id, DEMO_PHOTO_ID)).all();
    expect(rows).toHaveLength(1);
    const [row] = rows;
    expect(row).toMatchObject({
      shopId: "demo-harbor",
      contentType: "image/png",
      purpose: "probe-photo:demo-map-om5150",
    });
    const file = await storage.get(row.storageKey);
    expect(file?.bytes.length).toBe(row.bytes);
    expect(createHash("sha256").update(file!.bytes).digest("hex")).toBe(row.sha256);
    const version = await db.select().from(mapVersions).where(eq(mapVersions.id, "demo-map-om5150-v1")).get();
    const doc = version!.document as {
      nodes: Array<{ id: string; probe?: { photo?: { uploadId: string } } }>;
    };
    const pointing = doc.nodes.filter((n) => n.probe?.photo?.uploadId === DEMO_PHOTO_ID).map((n) => n.id);
    expect(pointing.sort()).toEqual(["en-3v3-stby", "v3p3-stby", "v5-stby"]);

    // Again, and with the bytes lost from storage: the row stays single and the bytes come back.
    await storage.delete(row.storageKey);
    expect(await seedDemoProbePhoto(db)).toMatchObject({ stored: true });
    expect(await seedDemoProbePhoto(db)).toMatchObject({ stored: false });
    expect(await db.select({ n: count() }).from(uploads).where(eq(uploads.id, DEMO_PHOTO_ID)).get()).toEqual({
      n: 1,
    });
    expect((await storage.get(row.storageKey))?.bytes.length).toBe(row.bytes);
  });
});
