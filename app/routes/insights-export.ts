import { parseInsightsFilter } from "~/lib/insights-filters";
import { requireMember } from "~/server/auth.server";
import { reportsDb } from "~/server/read-thread.server";
import { INSIGHT_TABLES, isInsightTable, toCsv } from "~/server/insights-tables.server";
import type { Route } from "./+types/insights-export";
import { withResourceHeaders } from "~/server/security-headers.server";

// CSV download of any insights table with the page's filters. GET only, so it changes nothing and needs no
// origin check; cookie-authenticated like the pages.
export const loader = withResourceHeaders(async function loader({ request, params }: Route.LoaderArgs) {
  const { shop } = await requireMember(request, { permission: "view:insights" });
  const name = params.table.replace(/\.csv$/, "");
  if (!isInsightTable(name))
    throw new Response(`There is no insights table called "${name}".`, { status: 404 });
  const { filter, errors } = parseInsightsFilter(new URL(request.url).searchParams);
  if (Object.keys(errors).length)
    throw new Response(`Fix the filters first: ${Object.values(errors).join(" ")}`, { status: 400 });
  const table = await INSIGHT_TABLES[name](reportsDb(), shop.id, filter);
  const fileName = `railwise-${name}-${filter.from}-to-${filter.to}.csv`;
  return new Response(toCsv(table), {
    headers: {
      "Content-Type": "text/csv; charset=utf-8",
      "Content-Disposition": `attachment; filename="${fileName}"`,
      "Cache-Control": "private, no-store",
      "X-Content-Type-Options": "nosniff",
    },
  });
});
