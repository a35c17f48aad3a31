import { eq } from "drizzle-orm";
import { beforeAll, describe, expect, it, vi } from "vitest";

vi.hoisted(() => {
  // Keep this file's uploads in a temporary folder (the storage module reads it when first imported).
  process.env.UPLOADS_DIR = require("node:fs").mkdtempSync(
    require("node:path").join(require("node:os").tmpdir(), "railwise-note-photos-"),
  );
});

import * as runRoute from "~/routes/run";
import * as uploadFile from "~/routes/upload-file";
import { db } from "~/server/db.server";
import { runNotes, uploads } from "~/server/schema.server";
import { createShopWithRoles } from "../support/fixtures";
import { call, getRequest } from "../support/requests";
import { loadRun, publishDemoMap, startRun } from "../support/runs";

// A 1×1 PNG (the PNG signature 89 50 4E 47 0D 0A 1A 0A, ISO/IEC 15948 §5.2, then IHDR, IDAT, IEND).
const PNG = Buffer.from(
  "iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mP8z8BQDwAEhQGAhKmMIQAAAABJRU5ErkJggg==",
  "base64",
);

type Shop = Awaited<ReturnType<typeof createShopWithRoles>>;
let shop: Shop;
let runId: string;

beforeAll(async () => {
  shop = await createShopWithRoles("Note Photo Shop");
  const { versionId } = await publishDemoMap(shop.shopId, shop.boardId);
  runId = await startRun(shop.cookies.tech, { boardId: shop.boardId, mapVersionId: versionId });
});

function postNote(cookie: string, text: string, file?: { name: string; bytes: Uint8Array; type: string }) {
  const form = new FormData();
  form.append("intent", "note");
  form.append("text", text);
  if (file) form.append("photo", new File([file.bytes as BlobPart], file.name, { type: file.type }));
  return call(runRoute.action, {
    request: new Request(`http://railwise.test/runs/${runId}`, {
      method: "POST",
      body: form,
      headers: { Cookie: cookie },
    }),
    params: { runId },
  });
}

const notesOf = () => db.select().from(runNotes).where(eq(runNotes.runId, runId)).all();
const uploadsOf = () => db.select().from(uploads).where(eq(uploads.shopId, shop.shopId)).all();

describe("a photo on a run note", () => {
  it("is stored with the note, shown in the run and served only to the shop", async () => {
    const res = await postNote(shop.cookies.tech, "C7 looks burnt", {
      name: "c7.png",
      bytes: PNG,
      type: "image/png",
    });
    expect(res.status).toBe(200);
    const [note] = (await notesOf()).filter((n) => n.text === "C7 looks burnt");
    expect(note.uploadId).toBeTruthy();
    const upload = (await uploadsOf()).find((u) => u.id === note.uploadId)!;
    expect(upload).toMatchObject({
      contentType: "image/png",
      bytes: PNG.length,
      purpose: `run-note:${runId}`,
    });

    const loaded = await loadRun(shop.cookies.tech, runId);
    const shown = (loaded.data as { view: { notes: Array<{ text: string; photoId: string | null }> } }).view
      .notes;
    expect(shown.find((n) => n.text === "C7 looks burnt")?.photoId).toBe(note.uploadId);

    const served = await call(uploadFile.loader, {
      request: getRequest(`/uploads/${note.uploadId}`, shop.cookies.desk),
      params: { uploadId: note.uploadId! },
    });
    expect(served.status).toBe(200);
    expect(Buffer.from(await served.response!.arrayBuffer()).equals(PNG)).toBe(true);

    const other = await createShopWithRoles("Other Note Shop");
    const leaked = await call(uploadFile.loader, {
      request: getRequest(`/uploads/${note.uploadId}`, other.cookies.owner),
      params: { uploadId: note.uploadId! },
    });
    expect(leaked.status).toBe(404);
  });

  it("keeps a note without a photo a plain note", async () => {
    const res = await postNote(shop.cookies.tech, "Board was in a bag of rice");
    expect(res.status).toBe(200);
    const [note] = (await notesOf()).filter((n) => n.text === "Board was in a bag of rice");
    expect(note.uploadId).toBeNull();
  });

  it("refuses a file whose bytes are not a photo, whatever its name says, and writes nothing", async () => {
    const notesBefore = (await notesOf()).length;
    const uploadsBefore = (await uploadsOf()).length;
    const res = await postNote(shop.cookies.tech, "see attached", {
      name: "board.png",
      bytes: new TextEncoder().encode(
        "<svg xmlns='http://www.w3.org/2000/svg'><script>alert(1)</script></svg>",
      ),
      type: "image/png",
    });
    expect(res.status).toBe(415);
    expect(JSON.stringify(res.data)).toContain("is not a PNG, JPEG or WebP photo");
    expect(JSON.stringify(res.data)).toContain("Nothing was saved");
    expect((await notesOf()).length).toBe(notesBefore);
    expect((await uploadsOf()).length).toBe(uploadsBefore);
  });

  it("refuses a photo over 8 MB before it is stored, and writes nothing", async () => {
    const notesBefore = (await notesOf()).length;
    const big = new Uint8Array(8 * 1024 * 1024 + 1);
    big.set(PNG);
    const res = await postNote(shop.cookies.tech, "huge", { name: "big.png", bytes: big, type: "image/png" });
    expect(res.status).toBe(413);
    expect(JSON.stringify(res.data)).toContain("larger than 8 MB");
    expect((await notesOf()).length).toBe(notesBefore);
  });

  it("does not let the front desk attach notes to a run", async () => {
    const res = await postNote(shop.cookies.desk, "desk note", {
      name: "c7.png",
      bytes: PNG,
      type: "image/png",
    });
    expect(res.status).toBe(403);
    expect((await notesOf()).some((n) => n.text === "desk note")).toBe(false);
  });
});
