import { sql } from "drizzle-orm";
import { db } from "~/server/db.server";
import type { call } from "./requests";

/** Row counts of every table of the app (left out: `skip`), to prove a refused request wrote nothing. */
export async function tableCounts(skip: string[] = []) {
  const tables = (await db.all<{ name: string }>(
    sql`select name from sqlite_master where type = 'table' and name not like 'sqlite_%' and name not like '%drizzle%'`,
  )) as Array<{ name: string }>;
  const names = tables.map((t) => t.name).filter((name) => !skip.includes(name));
  // One statement for all tables: against a libSQL server every statement is a network round trip.
  const rows = (await db.all<{ name: string; n: number }>(
    sql.raw(
      names.map((name) => `select '${name}' as name, count(*) as n from "${name}"`).join(" union all "),
    ),
  )) as Array<{ name: string; n: number }>;
  const out: Record<string, number> = {};
  for (const name of names) out[name] = Number(rows.find((r) => r.name === name)?.n);
  return out;
}

/** The text of a route's answer, whether it returned data, a string or a Response. */
export async function answerText(res: Awaited<ReturnType<typeof call>>) {
  if (typeof res.data === "string") return res.data;
  if (res.data !== undefined) return JSON.stringify(res.data);
  return res.response ? res.response.clone().text() : "";
}
