import { sql } from "drizzle-orm";
import { db } from "~/server/db.server";
import type { call } from "./requests";

/** Row counts of every table of the app (left out: `skip`), to prove a refused request wrote nothing. */
export async function tableCounts(skip: string[] = []) {
  const tables = (await db.all<{ name: string }>(
    sql`select name from sqlite_master where type = 'table' and name not like 'sqlite_%' and name not like '%drizzle%'`,
  )) as Array<{ name: string }>;
  const out: Record<string, number> = {};
  for (const { name } of tables) {
    if (skip.includes(name)) continue;
    out[name] = (
      (await db.get<{ n: number }>(sql.raw(`select count(*) as n from "${name}"`))) as { n: number }
    ).n;
  }
  return out;
}

/** The text of a route's answer, whether it returned data, a string or a Response. */
export async function answerText(res: Awaited<ReturnType<typeof call>>) {
  if (typeof res.data === "string") return res.data;
  if (res.data !== undefined) return JSON.stringify(res.data);
  return res.response ? res.response.clone().text() : "";
}
