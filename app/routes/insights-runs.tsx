import { createColumnHelper } from "@tanstack/react-table";
import { CsvLink, InsightsFilterForm, InsightsTabs } from "~/components/insights/filter-form";
import { DataTable, pct } from "~/components/insights/data-table";
import { PageHeader } from "~/components/page-header";
import {
  checkVersionFilter,
  filterQuery,
  parseInsightsFilter,
  REPEAT_WINDOW_DAYS,
} from "~/lib/insights-filters";
import { requireMember } from "~/server/auth.server";
import { db } from "~/server/db.server";
import { reportsDb } from "~/server/read-thread.server";
import {
  type EscalationSpot,
  type FixKindStats,
  getEscalations,
  getFilterChoices,
  getFirstTimeFix,
  getRepeatFailures,
  getStrategyStats,
  type RepeatFailure,
  type StrategyStats,
} from "~/server/insights.server";
import type { Route } from "./+types/insights-runs";

export async function loader({ request }: Route.LoaderArgs) {
  const { shop } = await requireMember(request, { permission: "view:insights" });
  const parsed = parseInsightsFilter(new URL(request.url).searchParams);
  const choicesLoading = getFilterChoices(db, shop.id);
  const { filter, errors } = parsed.filter.versionId
    ? checkVersionFilter(parsed, (await choicesLoading).versions)
    : parsed;
  const reports = reportsDb();
  const [choices, strategies, escalations, firstTimeFix, repeats] = await Promise.all([
    choicesLoading,
    getStrategyStats(reports, shop.id, filter),
    getEscalations(reports, shop.id, filter),
    getFirstTimeFix(reports, shop.id, filter),
    getRepeatFailures(reports, shop.id, filter),
  ]);
  return {
    filter,
    errors,
    choices,
    strategies,
    escalations,
    firstTimeFix,
    repeats,
    query: filterQuery(filter),
  };
}

export default function InsightsRunsRoute({ loaderData }: Route.ComponentProps) {
  const { filter, errors, choices, strategies, escalations, firstTimeFix, repeats, query } = loaderData;
  return (
    <>
      <PageHeader
        title="Insights"
        subtitle="How runs go: time to isolation, readings, escalations, fixes that hold."
      />
      <InsightsTabs query={query} />
      <InsightsFilterForm filter={filter} errors={errors} choices={choices} />
      <div className="flex flex-col gap-8">
        <section aria-labelledby="st-title">
          <SectionHead
            id="st-title"
            title="Time to isolation and readings per run"
            table="strategies"
            query={query}
          />
          <p className="mb-3 text-sm text-muted">
            Isolated runs only. Median and 90th percentile by nearest rank; readings leave out skipped ones
            and corrections. Compare the strategies on one board for a fair test.
          </p>
          <DataTable data={strategies} columns={STRATEGY_COLUMNS} caption="Runs by strategy" />
        </section>
        <section aria-labelledby="esc-title">
          <SectionHead id="esc-title" title="Escalations" table="escalations" query={query} />
          <p className="mb-3 text-sm">
            <strong className="tabular-nums">{escalations.escalated}</strong> of{" "}
            <span className="tabular-nums">{escalations.runs}</span> runs escalated to a lead (
            <span className="tabular-nums">{pct(escalations.rate)}</span>, 95 % interval{" "}
            {pct(escalations.low)} – {pct(escalations.high)}). Where: the last net read before asking for
            help.
          </p>
          <DataTable
            data={escalations.spots}
            columns={ESCALATION_COLUMNS}
            caption="Where escalations happen"
          />
        </section>
        <section aria-labelledby="ftf-title">
          <SectionHead
            id="ftf-title"
            title="First-time-fix rate per fix type"
            table="first-time-fix"
            query={query}
          />
          <p className="mb-3 text-sm text-muted">
            A first-time fix powers on at re-test and the device does not come back within{" "}
            {REPEAT_WINDOW_DAYS} days.
          </p>
          <DataTable data={firstTimeFix} columns={FTF_COLUMNS} caption="First-time-fix rate per fix type" />
        </section>
        <section aria-labelledby="rep-title">
          <SectionHead
            id="rep-title"
            title={`Repeat failures within ${REPEAT_WINDOW_DAYS} days`}
            table="repeats"
            query={query}
          />
          <p className="mb-3 text-sm">
            <strong className="tabular-nums">{repeats.repeats}</strong> of{" "}
            <span className="tabular-nums">{repeats.fixedJobs}</span> fixed jobs came back on the same serial
            number within {REPEAT_WINDOW_DAYS} days ({pct(repeats.rate)}).
          </p>
          <DataTable data={repeats.list} columns={REPEAT_COLUMNS} caption="Repeat failures" />
        </section>
      </div>
    </>
  );
}

function SectionHead({
  id,
  title,
  table,
  query,
}: {
  id: string;
  title: string;
  table: string;
  query: string;
}) {
  return (
    <div className="mb-1 flex flex-wrap items-center justify-between gap-2">
      <h2 id={id} className="text-lg font-semibold">
        {title}
      </h2>
      <CsvLink table={table} query={query} />
    </div>
  );
}

const minutes = (ms: number | null) => (ms == null ? "–" : `${(ms / 60_000).toFixed(1)} min`);
const num = (x: number | null) => <span className="tabular-nums">{x ?? "–"}</span>;

const s = createColumnHelper<StrategyStats>();
const STRATEGY_COLUMNS = [
  s.accessor("strategy", {
    header: "Strategy",
    cell: (c) => (c.getValue() === "all" ? "All strategies" : c.getValue()),
  }),
  s.accessor("runs", { header: "Runs", cell: (c) => num(c.getValue()) }),
  s.accessor("isolated", { header: "Isolated", cell: (c) => num(c.getValue()) }),
  s.accessor("medianMs", { header: "Median time", cell: (c) => minutes(c.getValue()) }),
  s.accessor("p90Ms", { header: "90th percentile time", cell: (c) => minutes(c.getValue()) }),
  s.accessor("medianReadings", { header: "Median readings", cell: (c) => num(c.getValue()) }),
  s.accessor("meanReadings", { header: "Mean readings", cell: (c) => num(c.getValue()) }),
];

const e = createColumnHelper<EscalationSpot>();
const ESCALATION_COLUMNS = [
  e.accessor("boardLabel", { header: "Board" }),
  e.accessor("netName", { header: "Last net read" }),
  e.accessor("escalations", { header: "Escalations", cell: (c) => num(c.getValue()) }),
];

const f = createColumnHelper<FixKindStats>();
const FTF_COLUMNS = [
  f.accessor("fixKind", { header: "Fix type" }),
  f.accessor("fixes", { header: "Fixes", cell: (c) => num(c.getValue()) }),
  f.accessor("firstTime", { header: "First-time fixes", cell: (c) => num(c.getValue()) }),
  f.accessor("rate", { header: "Rate", cell: (c) => pct(c.getValue()) }),
  f.accessor("low", {
    header: "95 % interval",
    cell: (c) => `${pct(c.getValue())} – ${pct(c.row.original.high)}`,
  }),
];

const r = createColumnHelper<RepeatFailure>();
const REPEAT_COLUMNS = [
  r.accessor("serial", { header: "Serial number" }),
  r.accessor("boardLabel", { header: "Board" }),
  r.accessor("firstJob", { header: "First job", cell: (c) => `#${c.getValue()}` }),
  r.accessor("nextJob", { header: "Returned as", cell: (c) => `#${c.getValue()}` }),
  r.accessor("daysApart", { header: "Days apart", cell: (c) => num(c.getValue()) }),
];

export const meta: Route.MetaFunction = () => [{ title: "Runs · Insights · Railwise" }];
