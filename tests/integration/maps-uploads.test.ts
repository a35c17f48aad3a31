import { eq } from "drizzle-orm";
import { describe, expect, it, vi } from "vitest";

vi.hoisted(() => {
  // Keep this file's uploads out of the repository's data folder.
  const { mkdtempSync: mk } = require("node:fs") as typeof import("node:fs");
  const { tmpdir: t } = require("node:os") as typeof import("node:os");
  const { join } = require("node:path") as typeof import("node:path");
  process.env.UPLOADS_DIR = mk(join(t(), "railwise-uploads-"));
});

import * as photos from "~/routes/map-photos";
import * as uploadFile from "~/routes/upload-file";
import { db } from "~/server/db.server";
import { uploads } from "~/server/schema.server";
import { createShopWithRoles } from "../support/fixtures";
import { newMap } from "../support/maps";
import { call, getRequest } from "../support/requests";

// A 1×1 PNG: the 8-byte signature 89 50 4E 47 0D 0A 1A 0A (PNG specification, W3C/ISO 15948 §5.2) then IHDR.
const PNG_1PX = Buffer.from(
  "iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mNk+M9QDwADhgGAWjR9awAAAABJRU5ErkJggg==",
  "base64",
);

// The smallest JPEG header file-type recognises: SOI FF D8, a JFIF APP0 segment, a 1×1 SOF0 frame, EOI
// (ITU-T T.81 §B.2; JFIF 1.02). It need not decode: only the bytes' type and claimed size are read.
const JPEG_1PX = Buffer.from("ffd8ffe000104a46494600010100000100010000ffc0000b080001000101011100ffd9", "hex");

function uploadRequest(mapId: string, cookie: string, bytes: Uint8Array, name: string, type: string) {
  const form = new FormData();
  form.append("photo", new File([bytes as BlobPart], name, { type }));
  return new Request(`http://railwise.test/maps/${mapId}/photos`, {
    method: "POST",
    body: form,
    headers: { Cookie: cookie },
  });
}

async function setup() {
  const shop = await createShopWithRoles();
  const mapId = await newMap(shop.shopId, shop.boardId, shop.userIds.lead);
  return { shop, mapId };
}

describe("probe-point photos", () => {
  it("refuses a text file named .png (the bytes decide) and stores nothing", async () => {
    const { shop, mapId } = await setup();
    const r = await call(photos.action, {
      request: uploadRequest(
        mapId,
        shop.cookies.lead,
        Buffer.from("hello, I am text"),
        "board.png",
        "image/png",
      ),
      params: { mapId },
    });
    expect(r.status).toBe(415);
    expect((r.data as { message: string }).message).toMatch(/JPEG, PNG or WebP/);
    expect(await db.select().from(uploads).where(eq(uploads.shopId, shop.shopId)).all()).toEqual([]);
  });

  it("refuses SVG even though it is an image", async () => {
    const { shop, mapId } = await setup();
    const svg = Buffer.from(
      '<?xml version="1.0"?><svg xmlns="http://www.w3.org/2000/svg"><script>alert(1)</script></svg>',
    );
    const r = await call(photos.action, {
      request: uploadRequest(mapId, shop.cookies.lead, svg, "board.png", "image/png"),
      params: { mapId },
    });
    expect(r.status).toBe(415);
    expect(await db.select().from(uploads).where(eq(uploads.shopId, shop.shopId)).all()).toEqual([]);
  });

  it("refuses a photo over the size limit with 413", async () => {
    const { shop, mapId } = await setup();
    const big = new Uint8Array(photos.MAX_PHOTO_BYTES + 10);
    big.set(PNG_1PX);
    const r = await call(photos.action, {
      request: uploadRequest(mapId, shop.cookies.lead, big, "big.png", "image/png"),
      params: { mapId },
    });
    expect(r.status).toBe(413);
    expect(await db.select().from(uploads).where(eq(uploads.shopId, shop.shopId)).all()).toEqual([]);
  });

  it.each([
    ["notes.txt", "text/plain", /PNG image .*ends in \.txt; rename it to end in \.png/],
    ["board.jpg", "image/jpeg", /PNG image .*ends in \.jpg/],
    ["board", "image/png", /has no extension/],
  ])(
    "refuses a real PNG named %s (the name must agree with the bytes) and stores nothing",
    async (name, type, message) => {
      const { shop, mapId } = await setup();
      const r = await call(photos.action, {
        request: uploadRequest(mapId, shop.cookies.lead, PNG_1PX, name, type),
        params: { mapId },
      });
      expect(r.status).toBe(415);
      expect((r.data as { message: string }).message).toMatch(message);
      expect((r.data as { message: string }).message).toMatch(/Nothing was saved/);
      expect(await db.select().from(uploads).where(eq(uploads.shopId, shop.shopId)).all()).toEqual([]);
    },
  );

  it.each(["c7.jpg", "c7.jpeg", "C7.JPG"])("stores a JPEG named %s", async (name) => {
    const { shop, mapId } = await setup();
    const r = await call(photos.action, {
      request: uploadRequest(mapId, shop.cookies.lead, JPEG_1PX, name, "image/jpeg"),
      params: { mapId },
    });
    expect(r.status).toBe(200);
    const { uploadId } = r.data as { uploadId: string };
    const row = await db.select().from(uploads).where(eq(uploads.id, uploadId)).get();
    expect(row).toMatchObject({ contentType: "image/jpeg", bytes: JPEG_1PX.length });
  });

  it("answers a file part without a file name with 400, not a server error", async () => {
    const { shop, mapId } = await setup();
    const r = await call(photos.action, {
      request: uploadRequest(mapId, shop.cookies.lead, PNG_1PX, "", "image/png"),
      params: { mapId },
    });
    expect(r.status).toBe(400);
    expect((r.data as { message: string }).message).toMatch(/could not be read/);
    expect(await db.select().from(uploads).where(eq(uploads.shopId, shop.shopId)).all()).toEqual([]);
  });

  it("refuses a post from another site before reading it", async () => {
    const { shop, mapId } = await setup();
    const request = uploadRequest(mapId, shop.cookies.lead, PNG_1PX, "board.png", "image/png");
    request.headers.set("Origin", "https://elsewhere.example");
    const r = await call(photos.action, { request, params: { mapId } });
    expect(r.status).toBe(403);
    expect(await db.select().from(uploads).where(eq(uploads.shopId, shop.shopId)).all()).toEqual([]);
  });

  it("stores a real PNG named .png with its sniffed type and sha256, and serves it only to its shop", async () => {
    const { shop, mapId } = await setup();
    const r = await call(photos.action, {
      request: uploadRequest(mapId, shop.cookies.lead, PNG_1PX, "board.png", "application/octet-stream"),
      params: { mapId },
    });
    expect(r.status).toBe(200);
    const { uploadId } = r.data as { uploadId: string };
    const row = await db.select().from(uploads).where(eq(uploads.id, uploadId)).get();
    expect(row).toMatchObject({ contentType: "image/png", bytes: PNG_1PX.length, shopId: shop.shopId });
    const { createHash } = await import("node:crypto");
    expect(row!.sha256).toBe(createHash("sha256").update(PNG_1PX).digest("hex"));

    const served = await call(uploadFile.loader, {
      request: getRequest(`/uploads/${uploadId}`, shop.cookies.desk),
      params: { uploadId },
    });
    expect(served.status).toBe(200);
    expect(served.response!.headers.get("Content-Type")).toBe("image/png");
    expect(served.response!.headers.get("X-Content-Type-Options")).toBe("nosniff");
    expect(Buffer.from(await served.response!.arrayBuffer()).equals(PNG_1PX)).toBe(true);

    const other = await createShopWithRoles("Other shop");
    const refused = await call(uploadFile.loader, {
      request: getRequest(`/uploads/${uploadId}`, other.cookies.owner),
      params: { uploadId },
    });
    expect(refused.status).toBe(404);
    const signedOut = await call(uploadFile.loader, {
      request: getRequest(`/uploads/${uploadId}`),
      params: { uploadId },
    });
    expect(signedOut.status).toBe(302);
  });

  it("refuses uploads from the desk (403) and to another shop's map (404)", async () => {
    const { shop, mapId } = await setup();
    const desk = await call(photos.action, {
      request: uploadRequest(mapId, shop.cookies.desk, PNG_1PX, "a.png", "image/png"),
      params: { mapId },
    });
    expect(desk.status).toBe(403);
    const other = await createShopWithRoles("Other shop");
    const foreign = await call(photos.action, {
      request: uploadRequest(mapId, other.cookies.lead, PNG_1PX, "a.png", "image/png"),
      params: { mapId },
    });
    expect(foreign.status).toBe(404);
  });
});
