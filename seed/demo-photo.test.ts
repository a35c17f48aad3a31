import { inflateSync } from "node:zlib";
import { fileTypeFromBuffer } from "file-type";
import { describe, expect, it } from "vitest";
import { imageDimensions } from "~/lib/image-dimensions";
import { DEMO_PHOTO_ID, DEMO_PHOTO_MARKERS, DEMO_PHOTO_SIZE } from "./demo-photo-layout";
import { drawDemoBoardPng } from "./demo-photo.server";
import { OM_5150_MAP } from "./maps/om-5150";

// PNG layout: signature, then chunks of length, type, data, CRC (ISO/IEC 15948 §5.2–5.3).
function idatPixels(png: Uint8Array) {
  const buf = Buffer.from(png);
  const parts: Buffer[] = [];
  for (let i = 8; i < buf.length; ) {
    const len = buf.readUInt32BE(i);
    if (buf.toString("latin1", i + 4, i + 8) === "IDAT") parts.push(buf.subarray(i + 8, i + 8 + len));
    i += 12 + len;
  }
  return inflateSync(Buffer.concat(parts));
}

describe("demo probe photo", () => {
  const png = drawDemoBoardPng();

  it("is a PNG of the stated size that the upload checks accept, the same bytes every time", async () => {
    expect((await fileTypeFromBuffer(png))?.mime).toBe("image/png");
    expect(imageDimensions(png, "image/png")).toEqual(DEMO_PHOTO_SIZE);
    expect(Buffer.from(drawDemoBoardPng()).equals(Buffer.from(png))).toBe(true);
    // Flat colours compress well: far below the 5 MB upload limit.
    expect(png.length).toBeLessThan(60_000);
  });

  it("puts every marker on a tinned pad of the picture", () => {
    const px = idatPixels(png);
    const { width, height } = DEMO_PHOTO_SIZE;
    expect(px.length).toBe((width * 3 + 1) * height);
    for (const [net, m] of Object.entries(DEMO_PHOTO_MARKERS)) {
      const x = Math.round(m.x * width);
      const y = Math.round(m.y * height);
      const i = y * (width * 3 + 1) + 1 + x * 3;
      expect([px[i], px[i + 1], px[i + 2]], net).toEqual([208, 208, 198]);
    }
  });

  it("is pointed at by the OM-5150 map on at least the 3.3 V standby rail and its enable", () => {
    const withPhoto = OM_5150_MAP.nodes.flatMap((n) =>
      (n.kind === "rail" || n.kind === "signal") && n.probe.photo?.uploadId === DEMO_PHOTO_ID ? [n.name] : [],
    );
    expect(withPhoto).toEqual(expect.arrayContaining(["3V3_STBY", "EN_3V3_STBY"]));
  });
});
