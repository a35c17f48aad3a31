import { sha256 } from "@oslojs/crypto/sha2";
import { constantTimeEqual } from "@oslojs/crypto/subtle";
import { and, desc, eq, isNull } from "drizzle-orm";
import { can, type Permission, type Role } from "~/lib/permissions";
import { db } from "./db.server";
import { newId } from "./ids.server";
import { apiTokens, members, shops, users } from "./schema.server";

// Personal API tokens, built like sessions (see session.server.ts): "rw_<id>.<secret>", only SHA-256(secret)
// stored and compared in constant time. A token acts as its member with the member's *current* role.

export const TOKEN_PREFIX = "rw_";
export const MAX_TOKENS_PER_MEMBER = 20;
const encoder = new TextEncoder();
const hashSecret = (secret: string) => Buffer.from(sha256(encoder.encode(secret)));

export async function createApiToken(input: {
  shopId: string;
  memberId: string;
  userId: string;
  name: string;
}) {
  const id = newId(15);
  const secret = newId(25); // 200 bits
  await db.insert(apiTokens).values({ id, secretHash: hashSecret(secret), ...input });
  return { id, token: `${TOKEN_PREFIX}${id}.${secret}` };
}

/** The member's live tokens, newest first (never the secret: it was shown once). */
export function listApiTokens(memberId: string) {
  return db
    .select({
      id: apiTokens.id,
      name: apiTokens.name,
      createdAt: apiTokens.createdAt,
      lastUsedAt: apiTokens.lastUsedAt,
    })
    .from(apiTokens)
    .where(and(eq(apiTokens.memberId, memberId), isNull(apiTokens.revokedAt)))
    .orderBy(desc(apiTokens.createdAt))
    .all();
}

/** Revokes one of the member's own tokens; false when it is not theirs or already revoked. */
export async function revokeApiToken(memberId: string, tokenId: string): Promise<boolean> {
  const done = await db
    .update(apiTokens)
    .set({ revokedAt: new Date() })
    .where(and(eq(apiTokens.id, tokenId), eq(apiTokens.memberId, memberId), isNull(apiTokens.revokedAt)))
    .returning({ id: apiTokens.id });
  return done.length === 1;
}

const json = (status: number, error: string, extra: HeadersInit = {}) =>
  Response.json({ error }, { status, headers: { "Cache-Control": "no-store", ...extra } });

/**
 * The guard of /api/v1: `Authorization: Bearer rw_…`. No or bad token → 401, a role without the permission
 * → 403. Cookies are ignored here, so a cross-site page cannot ride a signed-in browser into the API.
 */
export async function requireApiMember(request: Request, options: { permission: Permission }) {
  const header = request.headers.get("Authorization") ?? "";
  const match = /^Bearer\s+(\S+)$/i.exec(header);
  const challenge = { "WWW-Authenticate": 'Bearer realm="railwise"' };
  if (!match) throw json(401, "Send a personal API token as 'Authorization: Bearer <token>'.", challenge);
  const token = match[1];
  const [id, secret] = token.startsWith(TOKEN_PREFIX) ? token.slice(TOKEN_PREFIX.length).split(".") : [];
  if (!id || !secret) throw json(401, "That is not a Railwise API token.", challenge);
  const row = await db
    .select({ token: apiTokens, member: members, shop: shops, user: { id: users.id, name: users.name } })
    .from(apiTokens)
    .innerJoin(members, eq(members.id, apiTokens.memberId))
    .innerJoin(shops, eq(shops.id, apiTokens.shopId))
    .innerJoin(users, eq(users.id, apiTokens.userId))
    .where(eq(apiTokens.id, id))
    .get();
  const valid =
    row &&
    !row.token.revokedAt &&
    row.member.shopId === row.token.shopId &&
    constantTimeEqual(new Uint8Array(row.token.secretHash), new Uint8Array(hashSecret(secret)));
  if (!valid) throw json(401, "The token is unknown or revoked.", challenge);
  const role = row.member.role as Role;
  if (!can(role, options.permission)) throw json(403, "Your role in this shop does not allow this.");
  const now = Date.now();
  // Touch at most once a minute: a script polling the API should not turn every read into a write.
  if (!row.token.lastUsedAt || now - row.token.lastUsedAt.getTime() > 60_000) {
    await db
      .update(apiTokens)
      .set({ lastUsedAt: new Date(now) })
      .where(eq(apiTokens.id, id));
  }
  return { shop: row.shop, member: row.member, user: row.user, role };
}
