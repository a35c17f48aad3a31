import { sha256 } from "@oslojs/crypto/sha2";
import { constantTimeEqual } from "@oslojs/crypto/subtle";
import { and, eq, lt, sql } from "drizzle-orm";
import { db } from "./db.server";
import { secureCookies } from "./env.server";
import { newId } from "./ids.server";
import { members, sessions, shops, users } from "./schema.server";

// Database sessions after the session guide that replaced the lucia package: the cookie holds "<id>.<secret>",
// the database keeps only SHA-256(secret), compared in constant time.
export const SESSION_COOKIE = "rw_session";
const IDLE_MS = 7 * 24 * 3600_000;
const ABSOLUTE_MS = 30 * 24 * 3600_000;
const TOUCH_MS = 3600_000;

const encoder = new TextEncoder();
const hashSecret = (secret: string) => Buffer.from(sha256(encoder.encode(secret)));

export async function createSession(userId: string, shopId: string | null) {
  const id = newId(15);
  const secret = newId(25); // 200 bits
  const now = Date.now();
  await db.insert(sessions).values({
    id,
    secretHash: hashSecret(secret),
    userId,
    shopId,
    lastSeenAt: new Date(now),
    expiresAt: new Date(now + ABSOLUTE_MS),
  });
  return { token: `${id}.${secret}`, id };
}

function readToken(request: Request): string | null {
  const header = request.headers.get("Cookie") ?? "";
  for (const part of header.split(";")) {
    const [k, ...v] = part.trim().split("=");
    if (k === SESSION_COOKIE) return decodeURIComponent(v.join("="));
  }
  return null;
}

// Every signed-in request runs this: one prepared statement brings the session, its user and the membership
// in the session's shop (null when the user was removed from it; requireMember then picks another shop).
const sessionById = db
  .select({
    session: sessions,
    user: { id: users.id, email: users.email, name: users.name },
    member: members,
    shop: shops,
  })
  .from(sessions)
  .innerJoin(users, eq(users.id, sessions.userId))
  .leftJoin(members, and(eq(members.userId, sessions.userId), eq(members.shopId, sessions.shopId)))
  .leftJoin(shops, eq(shops.id, members.shopId))
  .where(eq(sessions.id, sql.placeholder("id")))
  .prepare();

export async function getSession(request: Request) {
  const token = readToken(request);
  if (!token) return null;
  const [id, secret] = token.split(".");
  if (!id || !secret) return null;
  const found = await sessionById.get({ id });
  if (!found) return null;
  const { member, shop, ...row } = found;
  if (!constantTimeEqual(new Uint8Array(row.session.secretHash), new Uint8Array(hashSecret(secret))))
    return null;
  const now = Date.now();
  if (now >= row.session.expiresAt.getTime() || now - row.session.lastSeenAt.getTime() > IDLE_MS) {
    await db.delete(sessions).where(eq(sessions.id, id));
    return null;
  }
  if (now - row.session.lastSeenAt.getTime() > TOUCH_MS) {
    await db
      .update(sessions)
      .set({ lastSeenAt: new Date(now) })
      .where(eq(sessions.id, id));
  }
  return { ...row, membership: member && shop ? { member, shop } : null };
}

export function sessionCookie(token: string) {
  return [
    `${SESSION_COOKIE}=${encodeURIComponent(token)}`,
    "Path=/",
    "HttpOnly",
    "SameSite=Lax",
    `Max-Age=${Math.floor(ABSOLUTE_MS / 1000)}`,
    secureCookies() ? "Secure" : "",
  ]
    .filter(Boolean)
    .join("; ");
}

export function clearSessionCookie() {
  return [
    `${SESSION_COOKIE}=`,
    "Path=/",
    "HttpOnly",
    "SameSite=Lax",
    "Max-Age=0",
    secureCookies() ? "Secure" : "",
  ]
    .filter(Boolean)
    .join("; ");
}

export async function deleteSession(id: string) {
  await db.delete(sessions).where(eq(sessions.id, id));
}

export async function deleteAllSessions(userId: string) {
  await db.delete(sessions).where(eq(sessions.userId, userId));
}

export async function deleteExpiredSessions() {
  await db.delete(sessions).where(and(lt(sessions.expiresAt, new Date())));
}

export async function switchSessionShop(sessionId: string, shopId: string) {
  await db.update(sessions).set({ shopId }).where(eq(sessions.id, sessionId));
}

/** Sign-in, sign-up and invitation acceptance all start here: a new session id, and the old one ended. */
export async function startFreshSession(request: Request, userId: string, shopId: string | null) {
  const previous = await getSession(request);
  if (previous) await deleteSession(previous.session.id);
  return createSession(userId, shopId);
}
