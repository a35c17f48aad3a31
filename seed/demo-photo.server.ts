import { createHash } from "node:crypto";
import { crc32, deflateSync } from "node:zlib";
import type { Db } from "../app/server/db.server";
import { uploads } from "../app/server/schema.server";
import { storage } from "../app/server/storage.server";
import { DEMO_BOARDS, DEMO_SHOP } from "./demo-data";
import { CHIPS, DEMO_PHOTO_ID, DEMO_PHOTO_SIZE, padCentre, type Rect, TWO_PADS } from "./demo-photo-layout";

// The demo map's probe photo: an invented, stylised picture of the OM-5150's standby area, drawn here pixel by
// pixel (no real board is pictured) and stored through the storage module like a photo a lead uploads.

type Rgb = readonly [number, number, number];
const MASK: Rgb = [24, 96, 56];
const COPPER: Rgb = [46, 134, 78];
const EDGE: Rgb = [38, 40, 44];
const TIN: Rgb = [208, 208, 198];
const GOLD: Rgb = [196, 170, 104];
const SILK: Rgb = [238, 238, 230];
const CHIP: Rgb = [34, 34, 38];
const BODY = { r: [30, 30, 32], c: [198, 162, 112], l: [72, 72, 78] } as const satisfies Record<string, Rgb>;

// 5×7 glyphs for the silkscreen labels (only the characters the picture uses).
const GLYPHS: Record<string, string[]> = {
  "0": [" ### ", "#   #", "#  ##", "# # #", "##  #", "#   #", " ### "],
  "1": ["  #  ", " ##  ", "  #  ", "  #  ", "  #  ", "  #  ", " ### "],
  "2": [" ### ", "#   #", "    #", "   # ", "  #  ", " #   ", "#####"],
  "3": ["#####", "   # ", "  #  ", "   # ", "    #", "#   #", " ### "],
  "4": ["   # ", "  ## ", " # # ", "#  # ", "#####", "   # ", "   # "],
  "5": ["#####", "#    ", "#### ", "    #", "    #", "#   #", " ### "],
  "6": ["  ## ", " #   ", "#    ", "#### ", "#   #", "#   #", " ### "],
  C: [" ### ", "#   #", "#    ", "#    ", "#    ", "#   #", " ### "],
  L: ["#    ", "#    ", "#    ", "#    ", "#    ", "#    ", "#####"],
  R: ["#### ", "#   #", "#   #", "#### ", "# #  ", "#  # ", "#   #"],
  U: ["#   #", "#   #", "#   #", "#   #", "#   #", "#   #", " ### "],
};

class Canvas {
  readonly px: Uint8Array;
  constructor(
    readonly width: number,
    readonly height: number,
  ) {
    this.px = new Uint8Array(width * height * 3);
  }
  set(x: number, y: number, c: Rgb) {
    if (x < 0 || y < 0 || x >= this.width || y >= this.height) return;
    const i = (Math.floor(y) * this.width + Math.floor(x)) * 3;
    this.px[i] = c[0];
    this.px[i + 1] = c[1];
    this.px[i + 2] = c[2];
  }
  rect(r: Rect, c: Rgb) {
    for (let y = Math.round(r.y); y < Math.round(r.y + r.h); y++)
      for (let x = Math.round(r.x); x < Math.round(r.x + r.w); x++) this.set(x, y, c);
  }
  disc(cx: number, cy: number, radius: number, c: Rgb) {
    for (let y = Math.floor(cy - radius); y <= Math.ceil(cy + radius); y++)
      for (let x = Math.floor(cx - radius); x <= Math.ceil(cx + radius); x++)
        if ((x - cx) ** 2 + (y - cy) ** 2 <= radius ** 2) this.set(x, y, c);
  }
  /** A trace: horizontal then vertical, `w` pixels wide. */
  trace(from: { x: number; y: number }, to: { x: number; y: number }, w = 6) {
    const h = w / 2;
    this.rect({ x: Math.min(from.x, to.x) - h, y: from.y - h, w: Math.abs(to.x - from.x) + w, h: w }, COPPER);
    this.rect({ x: to.x - h, y: Math.min(from.y, to.y) - h, w, h: Math.abs(to.y - from.y) + w }, COPPER);
  }
  text(s: string, x: number, y: number, scale = 2) {
    [...s].forEach((ch, k) => {
      const g = GLYPHS[ch];
      if (!g) throw new Error(`no glyph for ${ch}`);
      g.forEach((row, gy) => {
        [...row].forEach((bit, gx) => {
          if (bit === "#")
            this.rect({ x: x + (k * 6 + gx) * scale, y: y + gy * scale, w: scale, h: scale }, SILK);
        });
      });
    });
  }
}

/** The picture as PNG bytes: 8-bit RGB, unfiltered scanlines, one IDAT (ISO/IEC 15948 §11.2). Deterministic. */
export function drawDemoBoardPng(): Uint8Array {
  const { width, height } = DEMO_PHOTO_SIZE;
  const cv = new Canvas(width, height);
  cv.rect({ x: 0, y: 0, w: width, h: height }, EDGE);
  cv.rect({ x: 12, y: 12, w: width - 24, h: height - 24 }, MASK);
  // A faint weave in the solder mask, so the picture does not look like a flat fill.
  for (let y = 12; y < height - 12; y++)
    for (let x = 12; x < width - 12; x++)
      if ((x * 7 + y * 13) % 11 === 0) cv.set(x, y, [MASK[0] + 6, MASK[1] + 8, MASK[2] + 6]);
  for (const [x, y] of [
    [32, 32],
    [width - 32, 32],
    [32, height - 32],
    [width - 32, height - 32],
  ]) {
    cv.disc(x, y, 11, GOLD);
    cv.disc(x, y, 6, EDGE);
  }

  const u402 = CHIPS.find((c) => c.label === "U402")!.body;
  const u401 = CHIPS.find((c) => c.label === "U401")!.body;
  // Copper under the parts: the 5 V buck's output, the 3.3 V buck's input, switch node and output, and its enable.
  cv.trace(padCentre("L401", 1), { x: u401.x + 20, y: u401.y });
  cv.trace(padCentre("L401", 2), { x: u402.x, y: u402.y + 20 }, 8);
  cv.trace({ x: u402.x + u402.w, y: u402.y + 20 }, padCentre("L402", 1));
  cv.trace(padCentre("L402", 2), padCentre("C415", 2), 8);
  cv.trace(padCentre("R362", 2), { x: u402.x + 20, y: u402.y + u402.h });
  cv.trace({ x: 200, y: padCentre("R362", 1).y }, padCentre("R362", 1));
  cv.trace({ x: 200, y: padCentre("R362", 1).y }, { x: 200, y: u401.y + u401.h - 20 });
  cv.trace({ x: u401.x + u401.w, y: u401.y + u401.h - 20 }, { x: 200, y: u401.y + u401.h - 20 });
  for (const [x, y] of [
    [250, 120],
    [270, 120],
    [560, 320],
    [580, 320],
    [180, 350],
  ]) {
    cv.disc(x, y, 5, GOLD);
    cv.disc(x, y, 2, EDGE);
  }

  for (const chip of CHIPS) {
    const b = chip.body;
    const pitch = b.w / (chip.perSide + 1);
    for (let i = 1; i <= chip.perSide; i++) {
      cv.rect({ x: b.x + i * pitch - 4, y: b.y - 8, w: 8, h: 10 }, TIN);
      cv.rect({ x: b.x + i * pitch - 4, y: b.y + b.h - 2, w: 8, h: 10 }, TIN);
      cv.rect({ x: b.x - 8, y: b.y + i * pitch - 4, w: 10, h: 8 }, TIN);
      cv.rect({ x: b.x + b.w - 2, y: b.y + i * pitch - 4, w: 10, h: 8 }, TIN);
    }
    cv.rect(b, CHIP);
    cv.disc(b.x + 9, b.y + 9, 4, [92, 92, 98]);
    cv.text(chip.label, b.x + 8, b.y - 30);
  }

  for (const p of TWO_PADS) {
    const b = p.body;
    cv.rect({ x: b.x - p.pad.w, y: b.y + (b.h - p.pad.h) / 2, w: p.pad.w, h: p.pad.h }, TIN);
    cv.rect({ x: b.x + b.w, y: b.y + (b.h - p.pad.h) / 2, w: p.pad.w, h: p.pad.h }, TIN);
    cv.rect(b, BODY[p.kind]);
    if (p.kind === "l") cv.rect({ x: b.x + 14, y: b.y + 12, w: b.w - 28, h: b.h - 24 }, [96, 96, 104]);
    const labelY = p.kind === "l" ? b.y + b.h + 10 : b.y + b.h + 8;
    cv.text(p.label, b.x + b.w / 2 - 23, labelY);
  }

  const raw = new Uint8Array((width * 3 + 1) * height);
  for (let y = 0; y < height; y++) {
    raw[y * (width * 3 + 1)] = 0;
    raw.set(cv.px.subarray(y * width * 3, (y + 1) * width * 3), y * (width * 3 + 1) + 1);
  }
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(width, 0);
  ihdr.writeUInt32BE(height, 4);
  ihdr.set([8, 2, 0, 0, 0], 8); // bit depth 8, truecolour, deflate, adaptive filtering, no interlace
  return new Uint8Array(
    Buffer.concat([
      Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
      chunk("IHDR", ihdr),
      chunk("IDAT", deflateSync(raw, { level: 9 })),
      chunk("IEND", Buffer.alloc(0)),
    ]),
  );
}

function chunk(type: string, body: Buffer) {
  const len = Buffer.alloc(4);
  len.writeUInt32BE(body.length, 0);
  const typed = Buffer.concat([Buffer.from(type, "latin1"), body]);
  const crc = Buffer.alloc(4);
  crc.writeUInt32BE(crc32(typed), 0);
  return Buffer.concat([len, typed, crc]);
}

export const DEMO_PHOTO_KEY = `${DEMO_SHOP.id}/${DEMO_PHOTO_ID}.png`;

/**
 * Stores the picture and its uploads row as the editor's photo upload does (same key shape and purpose).
 * Safe to call again: the bytes are rewritten only when missing or different, the row only inserted once.
 */
export async function seedDemoProbePhoto(db: Db) {
  const bytes = drawDemoBoardPng();
  const sha256 = createHash("sha256").update(bytes).digest("hex");
  const stored = await storage.get(DEMO_PHOTO_KEY);
  const same =
    stored &&
    stored.bytes.length === bytes.length &&
    createHash("sha256").update(stored.bytes).digest("hex") === sha256;
  if (!same) await storage.put(DEMO_PHOTO_KEY, bytes, "image/png");
  await db
    .insert(uploads)
    .values({
      id: DEMO_PHOTO_ID,
      shopId: DEMO_SHOP.id,
      storageKey: DEMO_PHOTO_KEY,
      contentType: "image/png",
      bytes: bytes.length,
      sha256,
      purpose: `probe-photo:${DEMO_BOARDS[0].mapId}`,
      uploadedBy: "demo-user-lead",
    })
    .onConflictDoNothing();
  return { id: DEMO_PHOTO_ID, bytes: bytes.length, stored: !same };
}
