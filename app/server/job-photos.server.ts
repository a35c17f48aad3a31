import { createHash } from "node:crypto";
import { and, eq } from "drizzle-orm";
import { fileTypeFromBuffer } from "file-type";
import { db } from "./db.server";
import { newId } from "./ids.server";
import { jobPhotos, uploads } from "./schema.server";
import { storage } from "./storage.server";

// Intake photos of a device, kept through the shared storage module and listed in `uploads`.
import { PHOTO_MAX_BYTES } from "~/lib/customer-updates";
import { refuseImageSize } from "~/lib/image-dimensions";
export { PHOTO_MAX_BYTES, PHOTO_MAX_FILES } from "~/lib/customer-updates";
const ALLOWED = new Set(["image/png", "image/jpeg", "image/webp"]);

export type PhotoCheck = { ok: true; bytes: Uint8Array; type: string } | { ok: false; message: string };

/** Sniffs the bytes (never trusting the browser's type): PNG, JPEG or WebP only. */
export async function checkPhoto(file: File): Promise<PhotoCheck> {
  if (file.size > PHOTO_MAX_BYTES) return { ok: false, message: `${file.name} is larger than 8 MB.` };
  const bytes = new Uint8Array(await file.arrayBuffer());
  const sniffed = await fileTypeFromBuffer(bytes);
  if (!sniffed || !ALLOWED.has(sniffed.mime)) {
    return { ok: false, message: `${file.name} is not a PNG, JPEG or WebP photo.` };
  }
  const tooLarge = refuseImageSize(bytes, sniffed.mime);
  if (tooLarge) return { ok: false, message: `${file.name}: ${tooLarge}` };
  return { ok: true, bytes, type: sniffed.mime };
}

export async function storeJobPhoto(
  shopId: string,
  jobId: string,
  actorId: string,
  photo: { bytes: Uint8Array; type: string },
) {
  const uploadId = newId();
  const storageKey = `${shopId}/jobs/${jobId}/${uploadId}`;
  await storage.put(storageKey, photo.bytes, photo.type);
  await db.batch([
    db.insert(uploads).values({
      id: uploadId,
      shopId,
      storageKey,
      contentType: photo.type,
      bytes: photo.bytes.byteLength,
      sha256: createHash("sha256").update(photo.bytes).digest("hex"),
      purpose: "job-intake",
      uploadedBy: actorId,
    }),
    db.insert(jobPhotos).values({ id: newId(), shopId, jobId, uploadId }),
  ]);
}

export function listJobPhotos(shopId: string, jobId: string) {
  return db
    .select({ id: jobPhotos.id, contentType: uploads.contentType, bytes: uploads.bytes })
    .from(jobPhotos)
    .innerJoin(uploads, eq(uploads.id, jobPhotos.uploadId))
    .where(and(eq(jobPhotos.shopId, shopId), eq(jobPhotos.jobId, jobId)))
    .all();
}

export async function readJobPhoto(shopId: string, jobId: string, photoId: string) {
  const row = await db
    .select({ storageKey: uploads.storageKey, contentType: uploads.contentType })
    .from(jobPhotos)
    .innerJoin(uploads, eq(uploads.id, jobPhotos.uploadId))
    .where(and(eq(jobPhotos.shopId, shopId), eq(jobPhotos.jobId, jobId), eq(jobPhotos.id, photoId)))
    .get();
  if (!row) return null;
  return storage.get(row.storageKey);
}

/** Forgets an upload and removes its stored bytes. */
export async function deleteStoredUpload(shopId: string, uploadId: string) {
  const row = await db
    .select()
    .from(uploads)
    .where(and(eq(uploads.shopId, shopId), eq(uploads.id, uploadId)))
    .get();
  if (!row) return;
  await storage.delete(row.storageKey);
  await db.delete(uploads).where(eq(uploads.id, uploadId));
}
