import { and, count, eq, gte, lt, min } from "drizzle-orm";
import { db } from "./db.server";
import { env } from "./env.server";
import { signInFailures } from "./schema.server";

// Failed sign-ins are counted per account and per address over a sliding window. Past the limit the
// answer is "wait N minutes", never a lock that an attacker could use to shut a member out for good.

const windowMs = () => env.SIGNIN_WINDOW_MINUTES * 60_000;

async function waitFor(key: string, limit: number, now: number) {
  const since = new Date(now - windowMs());
  const row = await db
    .select({ n: count(), first: min(signInFailures.at) })
    .from(signInFailures)
    .where(and(eq(signInFailures.key, key), gte(signInFailures.at, since)))
    .get();
  if (!row || row.n < limit || !row.first) return 0;
  return new Date(row.first).getTime() + windowMs() - now;
}

export async function signInWaitMs(email: string, address: string, now = Date.now()) {
  const [a, b] = await Promise.all([
    waitFor(`account:${email.toLowerCase()}`, env.SIGNIN_MAX_PER_ACCOUNT, now),
    waitFor(`address:${address}`, env.SIGNIN_MAX_PER_ADDRESS, now),
  ]);
  return Math.max(a, b);
}

export async function recordSignInFailure(email: string, address: string, now = Date.now()) {
  const at = new Date(now);
  await db.batch([
    db.insert(signInFailures).values({ key: `account:${email.toLowerCase()}`, at }),
    db.insert(signInFailures).values({ key: `address:${address}`, at }),
    db.delete(signInFailures).where(lt(signInFailures.at, new Date(now - 2 * windowMs()))),
  ]);
}

export function clientAddress(request: Request, context?: unknown) {
  const fromContext = (context as { clientAddress?: string } | undefined)?.clientAddress;
  return fromContext ?? request.headers.get("x-forwarded-for")?.split(",")[0]?.trim() ?? "local";
}

export function describeWait(ms: number) {
  const minutes = Math.max(1, Math.ceil(ms / 60_000));
  return `Too many failed sign-ins. Wait ${minutes} minute${minutes === 1 ? "" : "s"} and try again.`;
}
