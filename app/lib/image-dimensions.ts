// Reads the pixel size an image claims in its header, without decoding it, so an upload that is tiny on the
// wire but would expand to gigabytes in a viewer (a "decompression bomb") can be refused before it is stored.
// Layouts: PNG IHDR (ISO/IEC 15948 §11.2.2), JPEG SOFn (ITU-T T.81 §B.2.2), WebP VP8/VP8L/VP8X (RFC 9649 §2.5–2.7).

export const MAX_IMAGE_SIDE = 12_000;
export const MAX_IMAGE_PIXELS = 50_000_000;

export type Dimensions = { width: number; height: number };

const u16be = (b: Uint8Array, i: number) => (b[i] << 8) | b[i + 1];
const u32be = (b: Uint8Array, i: number) =>
  ((b[i] << 24) >>> 0) + (b[i + 1] << 16) + (b[i + 2] << 8) + b[i + 3];
const u24le = (b: Uint8Array, i: number) => b[i] | (b[i + 1] << 8) | (b[i + 2] << 16);

export function imageDimensions(bytes: Uint8Array, mime: string): Dimensions | null {
  if (mime === "image/png") {
    if (bytes.length < 24) return null;
    return { width: u32be(bytes, 16), height: u32be(bytes, 20) };
  }
  if (mime === "image/jpeg") {
    let i = 2;
    while (i + 9 < bytes.length) {
      if (bytes[i] !== 0xff) return null;
      const marker = bytes[i + 1];
      // SOF0–SOF15 except DHT (C4), JPG (C8) and DAC (CC) carry the frame size.
      if (marker >= 0xc0 && marker <= 0xcf && marker !== 0xc4 && marker !== 0xc8 && marker !== 0xcc)
        return { height: u16be(bytes, i + 5), width: u16be(bytes, i + 7) };
      i += 2 + u16be(bytes, i + 2);
    }
    return null;
  }
  if (mime === "image/webp") {
    if (bytes.length < 30) return null;
    const chunk = String.fromCharCode(bytes[12], bytes[13], bytes[14], bytes[15]);
    if (chunk === "VP8X") return { width: u24le(bytes, 24) + 1, height: u24le(bytes, 27) + 1 };
    if (chunk === "VP8L") {
      const bits = bytes[21] | (bytes[22] << 8) | (bytes[23] << 16) | (bytes[24] << 24);
      return { width: (bits & 0x3fff) + 1, height: ((bits >> 14) & 0x3fff) + 1 };
    }
    if (chunk === "VP8 ")
      return {
        width: (bytes[26] | (bytes[27] << 8)) & 0x3fff,
        height: (bytes[28] | (bytes[29] << 8)) & 0x3fff,
      };
    return null;
  }
  return null;
}

/**
 * A refusal message when the image claims a canvas too large to be a bench photo. A header we cannot read is
 * let through: the bytes were already sniffed as an image, and refusing a real photo would lose it.
 */
export function refuseImageSize(bytes: Uint8Array, mime: string): string | null {
  const d = imageDimensions(bytes, mime);
  if (!d) return null;
  if (d.width > MAX_IMAGE_SIDE || d.height > MAX_IMAGE_SIDE || d.width * d.height > MAX_IMAGE_PIXELS)
    return `The image claims ${d.width}×${d.height} pixels; at most ${MAX_IMAGE_SIDE} pixels a side and ${MAX_IMAGE_PIXELS / 1_000_000} megapixels are accepted.`;
  return null;
}
