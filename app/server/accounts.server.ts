import { and, eq, gt, isNull, sql } from "drizzle-orm";
import { sha256 } from "@oslojs/crypto/sha2";
import { encodeHexLowerCase } from "@oslojs/encoding";
import { db } from "./db.server";
import { newId } from "./ids.server";
import { dummyVerify, hashPassword, verifyPassword } from "./password.server";
import { emailTokens, members, type Role, shops, users } from "./schema.server";

export const INVITE_TTL_MS = 7 * 24 * 3600_000;
export const RESET_TTL_MS = 60 * 60_000;

export const hashToken = (token: string) => encodeHexLowerCase(sha256(new TextEncoder().encode(token)));

export async function findUserByEmail(email: string) {
  return db.select().from(users).where(eq(users.email, email.toLowerCase())).get();
}

/** Checks a password; the same work is done whether or not the account exists. */
export async function checkCredentials(email: string, password: string) {
  const user = await findUserByEmail(email);
  if (!user) {
    await dummyVerify(password);
    return null;
  }
  return (await verifyPassword(user.passwordHash, password)) ? user : null;
}

export async function createUser(input: { email: string; name: string; password: string }) {
  const id = newId();
  await db.insert(users).values({
    id,
    email: input.email.toLowerCase(),
    name: input.name,
    passwordHash: await hashPassword(input.password),
  });
  return id;
}

/** Sign-up: a new shop with the new user as its first owner, in one batch so neither exists without the other. */
export async function createShopWithOwner(input: {
  email: string;
  name: string;
  password: string;
  shopName: string;
}) {
  const userId = newId();
  const shopId = newId();
  const passwordHash = await hashPassword(input.password);
  await db.batch([
    db.insert(users).values({ id: userId, email: input.email.toLowerCase(), name: input.name, passwordHash }),
    db.insert(shops).values({ id: shopId, name: input.shopName }),
    db.insert(members).values({ id: newId(), shopId, userId, role: "owner" }),
  ]);
  return { userId, shopId };
}

export async function createEmailToken(input: {
  purpose: "invite" | "reset";
  email: string;
  shopId?: string;
  role?: Role;
  userId?: string;
  createdBy?: string;
}) {
  const token = newId(24);
  const ttl = input.purpose === "invite" ? INVITE_TTL_MS : RESET_TTL_MS;
  await db.insert(emailTokens).values({
    id: newId(),
    purpose: input.purpose,
    tokenHash: hashToken(token),
    email: input.email.toLowerCase(),
    shopId: input.shopId,
    role: input.role,
    userId: input.userId,
    createdBy: input.createdBy,
    expiresAt: new Date(Date.now() + ttl),
  });
  return token;
}

/** A live (unused, unexpired) token of the given purpose, or undefined. */
export function findLiveToken(purpose: "invite" | "reset", token: string) {
  return db
    .select()
    .from(emailTokens)
    .where(
      and(
        eq(emailTokens.purpose, purpose),
        eq(emailTokens.tokenHash, hashToken(token)),
        isNull(emailTokens.usedAt),
        gt(emailTokens.expiresAt, new Date()),
      ),
    )
    .get();
}

/** Marks a token used; returns false when another request used it first (single use under races too). */
export async function consumeToken(id: string) {
  const result = await db
    .update(emailTokens)
    .set({ usedAt: new Date() })
    .where(and(eq(emailTokens.id, id), isNull(emailTokens.usedAt)))
    .run();
  return result.rowsAffected === 1;
}

export async function setPassword(userId: string, password: string) {
  await db
    .update(users)
    .set({ passwordHash: await hashPassword(password) })
    .where(eq(users.id, userId));
}

export async function countOwners(shopId: string) {
  const row = await db
    .select({ n: sql<number>`count(*)` })
    .from(members)
    .where(and(eq(members.shopId, shopId), eq(members.role, "owner")))
    .get();
  return row?.n ?? 0;
}

/** After a successful reset every other reset link of that user stops working too. */
export async function retireResetTokens(userId: string) {
  await db
    .update(emailTokens)
    .set({ usedAt: new Date() })
    .where(and(eq(emailTokens.purpose, "reset"), eq(emailTokens.userId, userId), isNull(emailTokens.usedAt)));
}
