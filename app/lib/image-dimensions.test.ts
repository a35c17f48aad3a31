import { describe, expect, it } from "vitest";
import { imageDimensions, refuseImageSize } from "./image-dimensions";

// Headers built by hand from the published layouts: PNG IHDR (ISO/IEC 15948 §11.2.2), JPEG APP0 + SOF0
// (ITU-T T.81 §B.2.2), WebP VP8X (RFC 9649 §2.7: canvas width/height minus one, 24-bit little-endian).
function png(width: number, height: number) {
  const b = Buffer.alloc(33);
  Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13, 0x49, 0x48, 0x44, 0x52]).copy(b);
  b.writeUInt32BE(width, 16);
  b.writeUInt32BE(height, 20);
  return new Uint8Array(b);
}
function jpeg(width: number, height: number) {
  const app0 = [0xff, 0xe0, 0, 16, 0x4a, 0x46, 0x49, 0x46, 0, 1, 1, 0, 0, 1, 0, 1, 0, 0];
  const sof0 = [0xff, 0xc0, 0, 11, 8, height >> 8, height & 255, width >> 8, width & 255, 1, 1, 0x11, 0];
  return new Uint8Array([0xff, 0xd8, ...app0, ...sof0, 0xff, 0xd9]);
}
function webpVp8x(width: number, height: number) {
  const b = Buffer.alloc(30);
  b.write("RIFF", 0);
  b.writeUInt32LE(22, 4);
  b.write("WEBPVP8X", 8);
  b.writeUInt32LE(10, 16);
  b.writeUIntLE(width - 1, 24, 3);
  b.writeUIntLE(height - 1, 27, 3);
  return new Uint8Array(b);
}

describe("image dimensions from headers", () => {
  it("reads PNG, JPEG and WebP canvas sizes", () => {
    expect(imageDimensions(png(640, 480), "image/png")).toEqual({ width: 640, height: 480 });
    expect(imageDimensions(jpeg(4032, 3024), "image/jpeg")).toEqual({ width: 4032, height: 3024 });
    expect(imageDimensions(webpVp8x(1920, 1080), "image/webp")).toEqual({ width: 1920, height: 1080 });
  });

  it("refuses canvases far beyond a bench photo and accepts phone-camera sizes", () => {
    expect(refuseImageSize(png(100_000, 100_000), "image/png")).toMatch(/100000×100000/);
    expect(refuseImageSize(jpeg(60_000, 10), "image/jpeg")).toMatch(/pixels/);
    expect(refuseImageSize(webpVp8x(9000, 9000), "image/webp")).toMatch(/megapixels/);
    expect(refuseImageSize(jpeg(4032, 3024), "image/jpeg")).toBeNull();
    expect(refuseImageSize(png(1, 1), "image/png")).toBeNull();
  });
});
