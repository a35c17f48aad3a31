import { asc, eq } from "drizzle-orm";
import { redirect } from "react-router";
import { can, type Permission, type Role } from "~/lib/permissions";
import { db } from "./db.server";
import { getSession } from "./session.server";
import { members, shops } from "./schema.server";

export type Member = Awaited<ReturnType<typeof requireMember>>;

export async function getOptionalUser(request: Request) {
  return getSession(request);
}

export async function requireUser(request: Request) {
  const found = await getSession(request);
  if (!found) {
    const url = new URL(request.url);
    const back = url.pathname + url.search;
    throw redirect(`/login${back && back !== "/" ? `?redirectTo=${encodeURIComponent(back)}` : ""}`);
  }
  return found;
}

/** Memberships of a user, oldest first. */
export function listMemberships(userId: string) {
  return db
    .select({ shopId: shops.id, shopName: shops.name, role: members.role, memberId: members.id })
    .from(members)
    .innerJoin(shops, eq(shops.id, members.shopId))
    .where(eq(members.userId, userId))
    .orderBy(asc(members.createdAt))
    .all();
}

/**
 * The one guard every loader and action of a signed-in page starts with: signed-out → redirect to /login,
 * a role without the permission → 403. The shop comes from the session, so every later query scopes by it.
 */
export async function requireMember(request: Request, options: { permission?: Permission } = {}) {
  const { session, user, membership: current } = await requireUser(request);
  let membership = current ?? undefined;
  if (!membership) {
    membership = await db
      .select({ shop: shops, member: members })
      .from(members)
      .innerJoin(shops, eq(shops.id, members.shopId))
      .where(eq(members.userId, user.id))
      .orderBy(asc(members.createdAt))
      .get();
  }
  if (!membership) throw new Response("You are not a member of any shop.", { status: 403 });
  const role = membership.member.role as Role;
  if (options.permission && !can(role, options.permission)) forbidden();
  return { user, session, shop: membership.shop, member: membership.member, role };
}

export function forbidden(): never {
  throw new Response("Your role in this shop does not allow this.", { status: 403 });
}

/** 404 for a record that is missing or belongs to another shop: never tell the two apart. */
export function notFound(what = "That record"): never {
  throw new Response(`${what} was not found in your shop.`, { status: 404 });
}
