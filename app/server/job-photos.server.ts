import { and, eq } from "drizzle-orm";
import { db } from "./db.server";
import { newId } from "./ids.server";
import { type CheckedPhoto, putPhoto } from "./photos.server";
import { jobPhotos, uploads } from "./schema.server";
import { storage } from "./storage.server";

// Intake photos of a device, kept through the shared storage module and listed in `uploads`.
export async function storeJobPhoto(shopId: string, jobId: string, actorId: string, photo: CheckedPhoto) {
  const upload = await putPhoto({
    shopId,
    actorId,
    keyPrefix: `jobs/${jobId}`,
    purpose: "job-intake",
    photo,
  });
  await db.batch([
    db.insert(uploads).values(upload),
    db.insert(jobPhotos).values({ id: newId(), shopId, jobId, uploadId: upload.id! }),
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
