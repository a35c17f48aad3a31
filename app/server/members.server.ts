import { and, desc, eq, gt, isNull, or, type SQL, sql } from "drizzle-orm";
import { db } from "./db.server";
import { emailTokens, members, type Role, sessions, users } from "./schema.server";

export function listMembers(shopId: string) {
  return db
    .select({
      id: members.id,
      role: members.role,
      userId: users.id,
      name: users.name,
      email: users.email,
      since: members.createdAt,
    })
    .from(members)
    .innerJoin(users, eq(users.id, members.userId))
    .where(eq(members.shopId, shopId))
    .orderBy(users.name)
    .all();
}

export function listPendingInvites(shopId: string) {
  return db
    .select({
      id: emailTokens.id,
      email: emailTokens.email,
      role: emailTokens.role,
      expiresAt: emailTokens.expiresAt,
    })
    .from(emailTokens)
    .where(
      and(
        eq(emailTokens.shopId, shopId),
        eq(emailTokens.purpose, "invite"),
        isNull(emailTokens.usedAt),
        gt(emailTokens.expiresAt, new Date()),
      ),
    )
    .orderBy(desc(emailTokens.createdAt))
    .all();
}

export type MemberChangeResult = { ok: true } | { ok: false; status: 400 | 404; message: string };

/** Role change or removal, refusing anything that would leave the shop without an owner. */
export async function changeMember(
  shopId: string,
  memberId: string,
  change: { role: Role } | { remove: true },
): Promise<MemberChangeResult> {
  const target = await db
    .select()
    .from(members)
    .where(and(eq(members.id, memberId), eq(members.shopId, shopId)))
    .get();
  if (!target) return { ok: false, status: 404, message: "That member was not found in your shop." };
  const lastOwner = {
    ok: false as const,
    status: 400 as const,
    message: "A shop needs at least one owner. Make someone else owner first.",
  };
  // The owner count is part of the write's own condition, so two owners demoting each other at the same
  // moment cannot both succeed and leave the shop without one.
  const keepsAnOwner = sql`(${members.role} != 'owner' or (select count(*) from ${members} m2 where m2.shop_id = ${shopId} and m2.role = 'owner') > 1)`;
  const where = and(eq(members.id, memberId), eq(members.shopId, shopId));
  const losesOwner = target.role === "owner" && ("remove" in change || change.role !== "owner");
  const result =
    "remove" in change
      ? await removeMember(target, and(where, keepsAnOwner)!)
      : await db
          .update(members)
          .set({ role: change.role })
          .where(losesOwner ? and(where, keepsAnOwner) : where)
          .run();
  if (result.rowsAffected !== 1) return lastOwner;
  return { ok: true };
}

/**
 * Removal ends the removed user's sessions that could still reach this shop. A session holds the shop it is
 * working in (sessions.shop_id), so those are the sessions whose current shop is this one; sessions working in
 * another shop of the same user stay, as this shop's owner has no say over them. Sessions without a shop of
 * their own were working in the user's oldest membership, possibly this one, so they go too; and when this was
 * the user's last membership, every session of theirs goes. Both deletes run in the same batch as the removal and only
 * when the membership row is really gone (the last-owner rule may have kept it).
 */
async function removeMember(target: typeof members.$inferSelect, where: SQL) {
  const gone = sql`not exists (select 1 from ${members} m where m.id = ${target.id})`;
  const noMembershipLeft = sql`not exists (select 1 from ${members} m where m.user_id = ${target.userId})`;
  const [removed] = await db.batch([
    db.delete(members).where(where),
    db
      .delete(sessions)
      .where(
        and(
          eq(sessions.userId, target.userId),
          gone,
          or(eq(sessions.shopId, target.shopId), isNull(sessions.shopId), noMembershipLeft),
        ),
      ),
  ]);
  return removed;
}
