import { db } from "~/server/db.server";
import { newId } from "~/server/ids.server";
import { hashPassword } from "~/server/password.server";
import { boards, members, type Role, shops, users } from "~/server/schema.server";
import { createSession, sessionCookie } from "~/server/session.server";

export const FIXTURE_PASSWORD = "fixture password 123";
let hashed: Promise<string> | undefined;

/** A shop with one member per role; returns their session cookies. */
export async function createShopWithRoles(name = "Fixture Shop") {
  hashed ??= hashPassword(FIXTURE_PASSWORD);
  const passwordHash = await hashed;
  const shopId = newId();
  await db.insert(shops).values({ id: shopId, name });
  const cookies = {} as Record<Role, string>;
  const userIds = {} as Record<Role, string>;
  for (const role of ["owner", "lead", "tech", "desk"] as const) {
    const userId = newId();
    await db.insert(users).values({
      id: userId,
      email: `${role}-${shopId}@fixture.test`,
      name: `${role} of ${name}`,
      passwordHash,
    });
    await db.insert(members).values({ id: newId(), shopId, userId, role });
    const { token } = await createSession(userId, shopId);
    cookies[role] = sessionCookie(token).split(";")[0];
    userIds[role] = userId;
  }
  const boardId = newId();
  await db.insert(boards).values({
    id: boardId,
    shopId,
    maker: "Fixture Maker",
    model: "Bench 1",
    boardNumber: "FX-100",
    revision: "A",
    inputType: "barrel",
    inputMillivolts: 19_000,
    batteryCells: 4,
  });
  return { shopId, cookies, userIds, boardId };
}
