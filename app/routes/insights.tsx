import { createColumnHelper } from "@tanstack/react-table";
import { Link } from "react-router";
import { CsvLink, InsightsFilterForm, InsightsTabs } from "~/components/insights/filter-form";
import { DataTable, pct } from "~/components/insights/data-table";
import { HotSpotChart } from "~/components/insights/hot-spot-chart";
import { EmptyState, PageHeader } from "~/components/page-header";
import { checkVersionFilter, filterQuery, parseInsightsFilter } from "~/lib/insights-filters";
import { requireMember } from "~/server/auth.server";
import { db } from "~/server/db.server";
import { reportsDb } from "~/server/read-thread.server";
import { getFilterChoices, getHotSpots, type HotSpot } from "~/server/insights.server";
import { indexMissingVersionNodes } from "~/server/map-version-nodes.server";
import type { Route } from "./+types/insights";

// Hot spots. Technicians and the desk see no insights (view:insights is owner and lead only): statistics of
// colleagues' runs are a review tool, and a technician's own runs are on the Runs page.
export async function loader({ request }: Route.LoaderArgs) {
  const { shop } = await requireMember(request, { permission: "view:insights" });
  const parsed = parseInsightsFilter(new URL(request.url).searchParams);
  await indexMissingVersionNodes(db, shop.id);
  const choicesLoading = getFilterChoices(db, shop.id);
  // Only a chosen version waits for the choices (to be checked against them); otherwise all runs at once.
  const { filter, errors } = parsed.filter.versionId
    ? checkVersionFilter(parsed, (await choicesLoading).versions)
    : parsed;
  const [choices, hotSpots] = await Promise.all([choicesLoading, getHotSpots(reportsDb(), shop.id, filter)]);
  return { filter, errors, choices, hotSpots, query: filterQuery(filter) };
}

export default function InsightsRoute({ loaderData }: Route.ComponentProps) {
  const { filter, errors, choices, hotSpots, query } = loaderData;
  const withFailures = hotSpots.filter((h) => h.failures > 0);
  // The shaded maps of the chosen board, or of the chosen version only; each link carries the filters.
  const versions = choices.versions.filter(
    (v) =>
      (!filter.boardId || v.boardId === filter.boardId) && (!filter.versionId || v.id === filter.versionId),
  );
  const boardLabel = new Map(choices.boards.map((b) => [b.id, b.label]));
  return (
    <>
      <PageHeader
        title="Insights"
        subtitle="Which nodes fail most on each board, how diagnosis goes, what to stock."
        actions={<CsvLink table="hot-spots" query={query} />}
      />
      <InsightsTabs query={query} />
      <InsightsFilterForm filter={filter} errors={errors} choices={choices} />
      {hotSpots.length === 0 ? (
        <EmptyState title="No finished runs in this range">
          Hot spots appear once runs on a published map end with a finding.
        </EmptyState>
      ) : (
        <div className="flex flex-col gap-6">
          <section aria-labelledby="hot-title">
            <h2 id="hot-title" className="mb-1 text-lg font-semibold">
              Hot spots
            </h2>
            <p className="mb-3 text-sm text-muted">
              Rate = runs that ended with the node as the finding ÷ finished runs on map versions containing
              the node. Ranked by the lower end of the 95 % Wilson interval, so a node seen failing 2 times in
              3 runs does not outrank one failing 40 times in 100.
            </p>
            <HotSpotTable rows={hotSpots} />
          </section>
          {withFailures.length ? (
            <HotSpotChart
              title="Top 10 hot spots by lower bound"
              rows={withFailures.slice(0, 10).map((h) => ({
                key: `${h.boardId}:${h.nodeId}`,
                label: `${filter.boardId ? "" : `${h.boardLabel} · `}${hotSpotLabel(h)}`,
                rate: h.rate,
                low: h.low,
                high: h.high,
              }))}
            />
          ) : null}
          {versions.length ? (
            <section className="card" aria-labelledby="maps-title">
              <h2 id="maps-title" className="mb-2 font-semibold">
                Maps shaded by failure rate
              </h2>
              <ul className="flex flex-col gap-1 text-sm">
                {versions.map((v) => (
                  <li key={v.id}>
                    <Link className="link" to={`/insights/map/${v.id}?${query}`}>
                      {boardLabel.get(v.boardId) ?? "Board"} · {v.mapName} · version {v.number}
                    </Link>
                  </li>
                ))}
              </ul>
            </section>
          ) : null}
        </div>
      )}
    </>
  );
}

const col = createColumnHelper<HotSpot>();
const COLUMNS = [
  col.accessor("boardLabel", { header: "Board" }),
  col.accessor((h) => hotSpotLabel(h), { id: "node", header: "Node" }),
  col.accessor("nodeKind", {
    header: "Kind",
    cell: (c) => (c.getValue() === "part" ? "part" : `${c.getValue()} (short)`),
  }),
  col.accessor("failures", {
    header: "Runs ending here",
    cell: (c) => <span className="tabular-nums">{c.getValue()}</span>,
  }),
  col.accessor("runs", {
    header: "Runs with the node",
    cell: (c) => <span className="tabular-nums">{c.getValue()}</span>,
  }),
  col.accessor("rate", {
    header: "Rate",
    cell: (c) => <span className="tabular-nums">{pct(c.getValue())}</span>,
  }),
  col.accessor("low", {
    header: "95 % interval",
    cell: (c) => (
      <span className="tabular-nums">
        {pct(c.getValue())} – {pct(c.row.original.high)}
      </span>
    ),
  }),
];

function HotSpotTable({ rows }: { rows: HotSpot[] }) {
  return (
    <DataTable
      data={rows}
      columns={COLUMNS}
      caption="Hot spots by board and node"
      initialSorting={[{ id: "low", desc: true }]}
    />
  );
}

function hotSpotLabel(h: Pick<HotSpot, "nodeKind" | "refdes" | "nodeName">) {
  if (h.nodeKind === "part") return h.refdes ? `${h.refdes} · ${h.nodeName}` : h.nodeName;
  return `Short on ${h.nodeName}`;
}

export const meta: Route.MetaFunction = () => [{ title: "Insights · Railwise" }];
