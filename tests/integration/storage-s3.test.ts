import { createHash } from "node:crypto";
import { GetObjectCommand, ListObjectsV2Command, S3Client } from "@aws-sdk/client-s3";
import { afterAll, describe, expect, it, vi } from "vitest";

// Uploads kept in S3-compatible storage: the storage module's S3 adapter against a local S3 fake (s3rver),
// started before the module reads its settings. The app keeps no file on its own disk in this mode.
const s3 = await vi.hoisted(async () => {
  const { mkdtempSync } = await import("node:fs");
  const { tmpdir } = await import("node:os");
  const { join } = await import("node:path");
  const S3rver = (await import("s3rver")).default;
  const server = new S3rver({
    address: "127.0.0.1",
    port: 0,
    silent: true,
    directory: mkdtempSync(join(tmpdir(), "railwise-s3rver-")),
    configureBuckets: [{ name: "railwise-test" }],
  });
  const { port } = (await server.run()) as { port: number };
  Object.assign(process.env, {
    S3_BUCKET: "railwise-test",
    S3_ENDPOINT: `http://127.0.0.1:${port}`,
    S3_REGION: "us-east-1",
    S3_ACCESS_KEY_ID: "S3RVER",
    S3_SECRET_ACCESS_KEY: "S3RVER",
    S3_FORCE_PATH_STYLE: "1",
    UPLOADS_DIR: mkdtempSync(join(tmpdir(), "railwise-s3-unused-disk-")),
  });
  return { server, port };
});

import { readdirSync } from "node:fs";
import * as mapPhotos from "~/routes/map-photos";
import * as uploadFile from "~/routes/upload-file";
import { createShopWithRoles } from "../support/fixtures";
import { call } from "../support/requests";
import { publishDemoMap } from "../support/runs";

const client = new S3Client({
  region: "us-east-1",
  endpoint: `http://127.0.0.1:${s3.port}`,
  forcePathStyle: true,
  credentials: { accessKeyId: "S3RVER", secretAccessKey: "S3RVER" },
});

afterAll(async () => {
  client.destroy();
  await s3.server.close();
});

// A real 1×1 PNG (ISO/IEC 15948 §5.2 signature, then IHDR, IDAT, IEND).
const PNG = Buffer.from(
  "iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mP8z8BQDwAEhQGAhKmMIQAAAABJRU5ErkJggg==",
  "base64",
);
const sha = (b: Uint8Array) => createHash("sha256").update(b).digest("hex");

function photo(mapId: string, cookie: string, bytes: Buffer, name: string) {
  const form = new FormData();
  form.append("photo", new File([new Uint8Array(bytes)], name, { type: "image/png" }));
  return new Request(`http://railwise.test/maps/${mapId}/photos`, {
    method: "POST",
    body: form,
    headers: { Cookie: cookie },
  });
}

const objects = async () =>
  (await client.send(new ListObjectsV2Command({ Bucket: "railwise-test" }))).Contents ?? [];

describe("uploads in S3-compatible storage", () => {
  it("stores a map photo as an object, serves it back to the shop, and refuses a lie without writing", async () => {
    const shop = await createShopWithRoles("S3 Bench");
    const other = await createShopWithRoles("S3 Other Bench");
    const { mapId } = await publishDemoMap(shop.shopId, shop.boardId);

    const res = await call(mapPhotos.action, {
      request: photo(mapId, shop.cookies.lead, PNG, "pad.png"),
      params: { mapId },
    });
    expect(res.status).toBe(200);
    const { uploadId } = res.data as { uploadId: string };

    const listed = await objects();
    expect(listed).toHaveLength(1);
    expect(listed[0].Key).toContain(shop.shopId);
    const object = await client.send(new GetObjectCommand({ Bucket: "railwise-test", Key: listed[0].Key! }));
    expect(sha(await object.Body!.transformToByteArray())).toBe(sha(PNG));
    // Nothing went to the local disk folder.
    expect(readdirSync(process.env.UPLOADS_DIR!)).toEqual([]);

    const served = await call(uploadFile.loader, {
      request: new Request(`http://railwise.test/uploads/${uploadId}`, {
        headers: { Cookie: shop.cookies.desk },
      }),
      params: { uploadId },
    });
    expect(served.status).toBe(200);
    expect(sha(new Uint8Array(await served.response!.arrayBuffer()))).toBe(sha(PNG));
    const foreign = await call(uploadFile.loader, {
      request: new Request(`http://railwise.test/uploads/${uploadId}`, {
        headers: { Cookie: other.cookies.owner },
      }),
      params: { uploadId },
    });
    expect(foreign.status).toBe(404);

    const lie = await call(mapPhotos.action, {
      request: photo(mapId, shop.cookies.lead, Buffer.from("plain text, not a photo"), "fake.png"),
      params: { mapId },
    });
    expect(lie.status).toBe(415);
    expect(await objects()).toHaveLength(1);
  });
});
