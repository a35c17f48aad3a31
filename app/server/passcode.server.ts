import { createCipheriv, createDecipheriv, createHash, randomBytes } from "node:crypto";

// Device passcodes are sealed with AES-256-GCM (NIST SP 800-38D): a fresh 96-bit IV per seal, the 128-bit
// tag checked on open, and the job id as associated data so a sealed value copied onto another job fails.
// PASSCODE_KEY is 64 hex digits (32 bytes); any other text is hashed to 32 bytes with SHA-256.
const DEV_KEY = "dev-only-passcode-key-change-me";

function key(): Buffer {
  const raw = process.env.PASSCODE_KEY;
  if (!raw && process.env.NODE_ENV === "production" && process.env.SEED_DEMO !== "1") {
    console.warn("PASSCODE_KEY is not set; device passcodes are sealed with the development key.");
  }
  const text = raw ?? DEV_KEY;
  return /^[0-9a-f]{64}$/i.test(text) ? Buffer.from(text, "hex") : createHash("sha256").update(text).digest();
}

export function sealPasscode(passcode: string, jobId: string): string {
  const iv = randomBytes(12);
  const cipher = createCipheriv("aes-256-gcm", key(), iv);
  cipher.setAAD(Buffer.from(jobId));
  const body = Buffer.concat([cipher.update(passcode, "utf8"), cipher.final()]);
  return [
    "v1",
    iv.toString("base64url"),
    cipher.getAuthTag().toString("base64url"),
    body.toString("base64url"),
  ].join(".");
}

export function openPasscode(sealed: string, jobId: string): string {
  const [version, iv, tag, body] = sealed.split(".");
  if (version !== "v1" || !iv || !tag || body === undefined) throw new Error("Unknown passcode format");
  const decipher = createDecipheriv("aes-256-gcm", key(), Buffer.from(iv, "base64url"));
  decipher.setAAD(Buffer.from(jobId));
  decipher.setAuthTag(Buffer.from(tag, "base64url"));
  return Buffer.concat([decipher.update(Buffer.from(body, "base64url")), decipher.final()]).toString("utf8");
}
