import { parseInsightsFilter } from "~/lib/insights-filters";
import { requireApiMember } from "~/server/api-tokens.server";
import { reportsDb } from "~/server/read-thread.server";
import { INSIGHT_TABLES, isInsightTable } from "~/server/insights-tables.server";
import type { Route } from "./+types/api-v1-insights";
import { withResourceHeaders } from "~/server/security-headers.server";

// JSON of any insights table for the shop's own spreadsheets and scripts:
//   GET /api/v1/insights/<table>?from=YYYY-MM-DD&to=…&board=…&tech=…&outcome=…
//   Authorization: Bearer <personal API token from /settings/tokens>
// Read-only and token-authenticated (cookies are ignored), so no CSRF surface.
export const loader = withResourceHeaders(async function loader({ request, params }: Route.LoaderArgs) {
  const { shop } = await requireApiMember(request, { permission: "view:insights" });
  const headers = { "Cache-Control": "no-store" };
  if (!isInsightTable(params.table))
    return Response.json(
      { error: `Unknown table "${params.table}".`, tables: Object.keys(INSIGHT_TABLES) },
      { status: 404, headers },
    );
  const { filter, errors } = parseInsightsFilter(new URL(request.url).searchParams);
  if (Object.keys(errors).length)
    return Response.json({ error: "Invalid filters.", fields: errors }, { status: 400, headers });
  const table = await INSIGHT_TABLES[params.table](reportsDb(), shop.id, filter);
  return Response.json(
    {
      table: params.table,
      filter: {
        from: filter.from,
        to: filter.to,
        board: filter.boardId ?? null,
        version: filter.versionId ?? null,
        tech: filter.techId ?? null,
        outcome: filter.outcome ?? null,
      },
      columns: table.columns,
      rows: table.rows,
    },
    { headers },
  );
});

export const action = withResourceHeaders(async function action() {
  return Response.json(
    { error: "The insights API is read-only: use GET." },
    { status: 405, headers: { Allow: "GET" } },
  );
});
