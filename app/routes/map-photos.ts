import { createHash } from "node:crypto";
import {
  FormDataParseError,
  type FileUpload,
  MaxFileSizeExceededError,
  MaxFilesExceededError,
  MaxTotalSizeExceededError,
  parseFormData,
} from "@remix-run/form-data-parser";
import { fileTypeFromBuffer } from "file-type";
import { data } from "react-router";
import { audit } from "~/server/audit.server";
import { requireMember } from "~/server/auth.server";
import { db } from "~/server/db.server";
import { newId } from "~/server/ids.server";
import { getMapForShop } from "~/server/maps.server";
import { assertSameOrigin } from "~/server/origin.server";
import { uploads } from "~/server/schema.server";
import { isUndecodableField } from "~/server/photos.server";
import { storage } from "~/server/storage.server";
import { refuseImageSize } from "~/lib/image-dimensions";
import { extensionMismatch } from "~/lib/upload-names";
import type { Route } from "./+types/map-photos";
import { withResourceHeaders } from "~/server/security-headers.server";

export const MAX_PHOTO_BYTES = 5 * 1024 * 1024;
// Only raster formats a browser shows inertly; SVG can carry script, so it is never accepted.
const ALLOWED = new Map([
  ["image/png", "png"],
  ["image/jpeg", "jpg"],
  ["image/webp", "webp"],
]);

type Reply = { ok: true; uploadId: string } | { ok: false; message: string };

/** Board photo upload for a probe point; the type comes from the file's bytes, and the name must agree with it. */
export const action = withResourceHeaders(async function action({ request, params }: Route.ActionArgs) {
  assertSameOrigin(request);
  const { shop, user } = await requireMember(request, { permission: "edit:maps" });
  const map = await getMapForShop(shop.id, params.mapId);
  let received: { bytes: Uint8Array; name: string } | null = null;
  try {
    await parseFormData(request, { maxFileSize: MAX_PHOTO_BYTES, maxFiles: 1 }, async (file: FileUpload) => {
      if (file.fieldName !== "photo") return null;
      received = { bytes: new Uint8Array(await file.arrayBuffer()), name: file.name };
      return null;
    });
  } catch (e) {
    if (e instanceof MaxFileSizeExceededError || e instanceof MaxTotalSizeExceededError)
      return data<Reply>(
        { ok: false, message: "The photo is larger than 5 MB; nothing was saved." },
        { status: 413 },
      );
    if (e instanceof MaxFilesExceededError)
      return data<Reply>({ ok: false, message: "Send one photo at a time." }, { status: 400 });
    if (e instanceof FormDataParseError || isUndecodableField(e))
      return data<Reply>({ ok: false, message: "The upload could not be read; try again." }, { status: 400 });
    throw e;
  }
  const got = received as { bytes: Uint8Array; name: string } | null;
  if (!got || got.bytes.length === 0)
    return data<Reply>({ ok: false, message: "Choose a photo to upload." }, { status: 400 });
  const sniffed = await fileTypeFromBuffer(got.bytes);
  const ext = sniffed ? ALLOWED.get(sniffed.mime) : undefined;
  if (!sniffed || !ext)
    return data<Reply>(
      {
        ok: false,
        message: `That file is ${sniffed ? `a ${sniffed.mime} file` : "not an image we recognise"}; upload a JPEG, PNG or WebP photo. Nothing was saved.`,
      },
      { status: 415 },
    );
  const misnamed = extensionMismatch(got.name, sniffed.mime);
  if (misnamed) return data<Reply>({ ok: false, message: `${misnamed} Nothing was saved.` }, { status: 415 });
  // A tiny file claiming a huge canvas would stall every viewer that decodes it.
  const tooLarge = refuseImageSize(got.bytes, sniffed.mime);
  if (tooLarge) return data<Reply>({ ok: false, message: `${tooLarge} Nothing was saved.` }, { status: 422 });
  const id = newId();
  const key = `${shop.id}/${id}.${ext}`;
  const sha256 = createHash("sha256").update(got.bytes).digest("hex");
  await storage.put(key, got.bytes, sniffed.mime);
  await db.insert(uploads).values({
    id,
    shopId: shop.id,
    storageKey: key,
    contentType: sniffed.mime,
    bytes: got.bytes.length,
    sha256,
    purpose: `probe-photo:${map.id}`,
    uploadedBy: user.id,
  });
  await audit({
    shopId: shop.id,
    actorId: user.id,
    action: "upload.created",
    subject: id,
    data: { mapId: map.id },
  });
  return data<Reply>({ ok: true, uploadId: id });
});
