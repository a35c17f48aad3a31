import { createHash } from "node:crypto";
import {
  FormDataParseError,
  MaxFileSizeExceededError,
  MaxFilesExceededError,
  MaxTotalSizeExceededError,
  parseFormData,
} from "@remix-run/form-data-parser";
import { fileTypeFromBuffer } from "file-type";
import { PHOTO_MAX_BYTES } from "~/lib/customer-updates";
import { refuseImageSize } from "~/lib/image-dimensions";
import { extensionMismatch } from "~/lib/upload-names";
import { newId } from "./ids.server";
import type { uploads } from "./schema.server";
import { storage } from "./storage.server";

// Photos people attach at the desk and the bench (intake photos, notes on a run). Probe-point photos in
// the editor have their own 5 MB limit in their route.
export { PHOTO_MAX_BYTES } from "~/lib/customer-updates";

const ALLOWED = new Set(["image/png", "image/jpeg", "image/webp"]);

export type CheckedPhoto = { bytes: Uint8Array; type: string };
export type PhotoCheck = ({ ok: true } & CheckedPhoto) | { ok: false; message: string };

/**
 * Sniffs the bytes (never trusting the browser's type): PNG, JPEG or WebP only, named with an extension of that
 * type, of a sane canvas size.
 */
export async function checkPhoto(file: File): Promise<PhotoCheck> {
  if (file.size > PHOTO_MAX_BYTES) return { ok: false, message: `${file.name} is larger than 8 MB.` };
  const bytes = new Uint8Array(await file.arrayBuffer());
  const sniffed = await fileTypeFromBuffer(bytes);
  if (!sniffed || !ALLOWED.has(sniffed.mime)) {
    return { ok: false, message: `${file.name} is not a PNG, JPEG or WebP photo.` };
  }
  const misnamed = extensionMismatch(file.name, sniffed.mime);
  if (misnamed) return { ok: false, message: misnamed };
  const tooLarge = refuseImageSize(bytes, sniffed.mime);
  if (tooLarge) return { ok: false, message: `${file.name}: ${tooLarge}` };
  return { ok: true, bytes, type: sniffed.mime };
}

/**
 * Puts the bytes in storage and returns the `uploads` row to insert, so the caller can write it in the same
 * batch as the record that points at it (a row never points at bytes that are not there).
 */
export async function putPhoto(input: {
  shopId: string;
  actorId: string;
  keyPrefix: string;
  purpose: string;
  photo: CheckedPhoto;
}) {
  const id = newId();
  const storageKey = `${input.shopId}/${input.keyPrefix}/${id}`;
  await storage.put(storageKey, input.photo.bytes, input.photo.type);
  const row: typeof uploads.$inferInsert = {
    id,
    shopId: input.shopId,
    storageKey,
    contentType: input.photo.type,
    bytes: input.photo.bytes.byteLength,
    sha256: createHash("sha256").update(input.photo.bytes).digest("hex"),
    purpose: input.purpose,
    uploadedBy: input.actorId,
  };
  return row;
}

/**
 * A file part sent without a file name is read as a text field, and binary bytes then fail to decode as UTF-8:
 * that is a malformed upload (400), not a server fault.
 */
export function isUndecodableField(e: unknown) {
  return e instanceof TypeError && (e as { code?: string }).code === "ERR_ENCODING_INVALID_ENCODED_DATA";
}

export type FormRead = { ok: true; formData: FormData } | { ok: false; status: number; message: string };

/**
 * Reads a form that may carry one photo: multipart bodies go through the streaming parser with the size cap,
 * so an oversize file is refused before it is buffered; plain forms are read as usual.
 */
export async function readFormWithPhoto(request: Request, field: string): Promise<FormRead> {
  if (!(request.headers.get("Content-Type") ?? "").startsWith("multipart/form-data"))
    return { ok: true, formData: await request.formData() };
  try {
    const formData = await parseFormData(request, { maxFileSize: PHOTO_MAX_BYTES, maxFiles: 1 }, (f) =>
      f.fieldName === field ? f : null,
    );
    return { ok: true, formData };
  } catch (e) {
    if (e instanceof MaxFileSizeExceededError || e instanceof MaxTotalSizeExceededError)
      return { ok: false, status: 413, message: "The photo is larger than 8 MB; nothing was saved." };
    if (e instanceof MaxFilesExceededError)
      return { ok: false, status: 400, message: "Attach one photo at a time; nothing was saved." };
    if (e instanceof FormDataParseError || isUndecodableField(e))
      return { ok: false, status: 400, message: "The form could not be read; nothing was saved. Try again." };
    throw e;
  }
}
