import { createColumnHelper } from "@tanstack/react-table";
import { CsvLink, InsightsFilterForm, InsightsTabs } from "~/components/insights/filter-form";
import { DataTable } from "~/components/insights/data-table";
import { PageHeader } from "~/components/page-header";
import { checkVersionFilter, filterQuery, parseInsightsFilter } from "~/lib/insights-filters";
import { requireMember } from "~/server/auth.server";
import { db } from "~/server/db.server";
import { reportsDb } from "~/server/read-thread.server";
import { getFilterChoices, getPartsUsage, type PartsUsage } from "~/server/insights.server";
import type { Route } from "./+types/insights-parts";

export async function loader({ request }: Route.LoaderArgs) {
  const { shop } = await requireMember(request, { permission: "view:insights" });
  const parsed = parseInsightsFilter(new URL(request.url).searchParams);
  const choicesLoading = getFilterChoices(db, shop.id);
  const { filter, errors } = parsed.filter.versionId
    ? checkVersionFilter(parsed, (await choicesLoading).versions)
    : parsed;
  const [choices, usage] = await Promise.all([choicesLoading, getPartsUsage(reportsDb(), shop.id, filter)]);
  return { filter, errors, choices, usage, query: filterQuery(filter) };
}

type PartRow = PartsUsage["parts"][number];

export default function InsightsPartsRoute({ loaderData }: Route.ComponentProps) {
  const { filter, errors, choices, usage, query } = loaderData;
  const h = createColumnHelper<PartRow>();
  const dash = (v: string | null) => v ?? <span className="text-muted">—</span>;
  const columns = [
    h.accessor("boardLabel", {
      header: "Board",
      cell: (c) => <span className="whitespace-nowrap">{c.getValue()}</span>,
    }),
    h.accessor("refdes", {
      header: "Reference",
      sortingFn: "alphanumeric",
      cell: (c) => <span className="font-mono">{c.getValue()}</span>,
    }),
    h.accessor((row) => row.name, {
      id: "name",
      header: "Part",
      cell: (c) => (
        <span className="inline-block min-w-40">
          {c.getValue() ?? <span className="text-muted">not on the map</span>}
        </span>
      ),
    }),
    h.accessor((row) => row.value, {
      id: "value",
      header: "Value",
      cell: (c) => <span className="font-mono">{dash(c.getValue())}</span>,
    }),
    h.accessor((row) => row.package, {
      id: "package",
      header: "Package",
      cell: (c) => <span className="whitespace-nowrap">{dash(c.getValue())}</span>,
    }),
    ...usage.months.map((m, i) =>
      h.accessor((row) => row.perMonth[i], {
        id: m,
        header: m === usage.runningMonth ? `${m} (so far)` : m,
        cell: (c) => <span className="tabular-nums">{c.getValue()}</span>,
      }),
    ),
    h.accessor("total", {
      header: "Total",
      cell: (c) => <span className="tabular-nums">{c.getValue()}</span>,
    }),
    h.accessor("forecast", {
      header: `Forecast ${usage.nextMonth}`,
      cell: (c) => <span className="tabular-nums">{c.getValue().toFixed(2)}</span>,
    }),
    h.accessor("stock", {
      header: "Stock to hold",
      cell: (c) => <strong className="tabular-nums">{c.getValue()}</strong>,
    }),
  ];
  // Older months are hidden at first so the table fits beside the part's description; the column chooser
  // brings them back.
  const hidden = Object.fromEntries(
    usage.months.slice(0, Math.max(0, usage.months.length - 4)).map((m) => [m, false]),
  );
  return (
    <>
      <PageHeader
        title="Insights"
        subtitle="Parts fitted in fixes, month by month, and what to keep on the shelf."
        actions={<CsvLink table="parts" query={query} />}
      />
      <InsightsTabs query={query} />
      <InsightsFilterForm filter={filter} errors={errors} choices={choices} />
      <p className="mb-3 text-sm text-muted">
        One row per board and reference designator, with the value and package its map gives, so the list can
        be ordered from (a designator whose value changed between map versions gets a row per value). Forecast
        for {usage.nextMonth}: {usage.method} “Stock to hold” rounds the forecast up to whole parts. Months
        are calendar months in UTC.
      </p>
      <DataTable
        data={usage.parts}
        columns={columns}
        caption="Parts used per board and reference designator, per month, with next month's forecast"
        initialHidden={hidden}
        initialSorting={[{ id: "forecast", desc: true }]}
        empty="No parts recorded in fixes in this range."
      />
    </>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Parts to stock · Insights · Railwise" }];
