import { encodeBase32LowerCaseNoPadding } from "@oslojs/encoding";

/** 120 random bits in lower-case base32: unguessable record ids and link tokens. */
export function newId(bytes = 15): string {
  const buf = new Uint8Array(bytes);
  crypto.getRandomValues(buf);
  return encodeBase32LowerCaseNoPadding(buf);
}
