import { eq } from "drizzle-orm";
import { describe, expect, it, vi } from "vitest";

vi.hoisted(() => {
  // Keep this file's uploads in a temporary folder (the storage module reads it when first imported).
  process.env.UPLOADS_DIR = require("node:fs").mkdtempSync(
    require("node:path").join(require("node:os").tmpdir(), "railwise-h7-uploads-"),
  );
});

import * as jobPhoto from "~/routes/job-photo";
import * as jobNew from "~/routes/job-new";
import { db } from "~/server/db.server";
import { deleteStoredUpload } from "~/server/job-photos.server";
import { jobPhotos, jobs, uploads } from "~/server/schema.server";
import { storage } from "~/server/storage.server";
import { createShopWithRoles } from "../support/fixtures";
import { call, getRequest } from "../support/requests";

// A 1×1 PNG (the PNG signature 89 50 4E 47 0D 0A 1A 0A, ISO/IEC 15948 §5.2, then IHDR, IDAT, IEND).
const PNG = Buffer.from(
  "iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mP8z8BQDwAEhQGAhKmMIQAAAABJRU5ErkJggg==",
  "base64",
);

function multipart(
  shop: Awaited<ReturnType<typeof createShopWithRoles>>,
  files: Array<{ name: string; bytes: Buffer; type: string }>,
) {
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
  for (const f of files) form.append("photos", new File([new Uint8Array(f.bytes)], f.name, { type: f.type }));
  return new Request("http://railwise.test/jobs/new", {
    method: "POST",
    body: form,
    headers: { Cookie: shop.cookies.desk },
  });
}

describe("intake photos", () => {
  it("stores a sniffed PNG with the job and serves it only to the shop", async () => {
    const shop = await createShopWithRoles();
    const res = await call(jobNew.action, {
      request: multipart(shop, [{ name: "lid.png", bytes: PNG, type: "image/png" }]),
    });
    expect(res.status).toBe(302);
    const jobId = res.response!.headers.get("Location")!.split("/").pop()!;
    const photos = await db.select().from(jobPhotos).where(eq(jobPhotos.jobId, jobId)).all();
    expect(photos.length).toBe(1);
    const served = await call(jobPhoto.loader, {
      request: getRequest(`/jobs/${jobId}/photos/${photos[0].id}`, shop.cookies.tech),
      params: { jobId, photoId: photos[0].id },
    });
    expect(served.status).toBe(200);
    expect(served.response!.headers.get("Content-Type")).toBe("image/png");
    expect(served.response!.headers.get("X-Content-Type-Options")).toBe("nosniff");
    expect(Buffer.from(await served.response!.arrayBuffer()).equals(PNG)).toBe(true);
    const other = await createShopWithRoles();
    const foreign = await call(jobPhoto.loader, {
      request: getRequest(`/jobs/${jobId}/photos/${photos[0].id}`, other.cookies.owner),
      params: { jobId, photoId: photos[0].id },
    });
    expect(foreign.status).toBe(404);
  });

  it("removes the stored bytes when an upload is erased", async () => {
    const shop = await createShopWithRoles();
    const res = await call(jobNew.action, {
      request: multipart(shop, [{ name: "lid.png", bytes: PNG, type: "image/png" }]),
    });
    const jobId = res.response!.headers.get("Location")!.split("/").pop()!;
    const [photo] = await db.select().from(jobPhotos).where(eq(jobPhotos.jobId, jobId)).all();
    const upload = (await db.select().from(uploads).where(eq(uploads.id, photo.uploadId)).get())!;
    expect(await storage.get(upload.storageKey)).not.toBeNull();
    await deleteStoredUpload(shop.shopId, upload.id);
    expect(await storage.get(upload.storageKey)).toBeNull();
    expect(await db.select().from(uploads).where(eq(uploads.id, upload.id)).get()).toBeUndefined();
  });

  it("refuses a file that only claims to be an image, and opens no job", async () => {
    const shop = await createShopWithRoles();
    const before = (await db.select().from(jobs).where(eq(jobs.shopId, shop.shopId)).all()).length;
    const res = await call(jobNew.action, {
      request: multipart(shop, [
        { name: "evil.png", bytes: Buffer.from("<svg onload=alert(1)>"), type: "image/png" },
      ]),
    });
    expect(res.status).toBe(400);
    expect(JSON.stringify(res.data)).toContain("is not a PNG, JPEG or WebP photo");
    expect((await db.select().from(jobs).where(eq(jobs.shopId, shop.shopId)).all()).length).toBe(before);
  });
});
