import {
  type ColumnDef,
  flexRender,
  getCoreRowModel,
  getFilteredRowModel,
  getSortedRowModel,
  type SortingState,
  useReactTable,
} from "@tanstack/react-table";
import { useState } from "react";
import { Link, useSearchParams } from "react-router";
import { EmptyState, PageHeader } from "~/components/page-header";
import { useMember } from "~/components/use-member";
import { JOB_STATE_LABELS, JOB_STATES, type JobState } from "~/lib/job-states";
import { requireMember } from "~/server/auth.server";
import { type JobListRow, type JobStation, listJobs } from "~/server/jobs.server";
import type { Route } from "./+types/jobs";

export async function loader({ request }: Route.LoaderArgs) {
  const { shop } = await requireMember(request, { permission: "view:jobs" });
  const asked = new URL(request.url).searchParams.get("state") ?? "";
  // An unknown state shows the open jobs, as the page does without one.
  const state: JobState | "" = (JOB_STATES as readonly string[]).includes(asked) ? (asked as JobState) : "";
  const { rows, stations } = await listJobs(shop.id, state);
  // "Now" comes from the server so the waiting times render the same on server and client.
  return { rows, stations, state, now: Date.now() };
}

// The main line of the repair, in order; declined branches off before closing.
const LINE: JobState[] = [
  "received",
  "diagnosing",
  "awaiting-approval",
  "repairing",
  "testing",
  "ready",
  "closed",
];

export default function JobsRoute({ loaderData }: Route.ComponentProps) {
  const { rows, stations, state: stateFilter, now } = loaderData;
  const { can } = useMember();
  const [, setParams] = useSearchParams();
  const total = Object.values(stations).reduce((n, s) => n + s.count, 0);
  const caption = stateFilter
    ? stateFilter === "closed" && stations.closed.count > rows.length
      ? `${JOB_STATE_LABELS.closed}: the ${rows.length} most recent of ${stations.closed.count}`
      : JOB_STATE_LABELS[stateFilter]
    : "Open jobs";
  return (
    <>
      <PageHeader
        title="Jobs"
        subtitle="Repair tickets from intake to pickup."
        actions={
          can("edit:jobs") ? (
            <Link to="/jobs/new" className="btn btn-primary">
              Take in a device
            </Link>
          ) : null
        }
      />
      {total === 0 ? (
        <EmptyState title="No jobs yet">The front desk opens a job when a device comes in.</EmptyState>
      ) : (
        <>
          <StateLine stations={stations} current={stateFilter} now={now} />
          <JobTable
            key={stateFilter}
            rows={rows}
            caption={caption}
            closed={stateFilter === "closed"}
            onClear={stateFilter ? () => setParams({}) : undefined}
          />
        </>
      )}
    </>
  );
}

/**
 * The per-state view: the repair line as a row of stations, each with its count and the jobs that have waited
 * longest in it (closed: the last ones closed).
 */
function StateLine({
  stations,
  current,
  now,
}: {
  stations: Record<JobState, JobStation>;
  current: JobState | "";
  now: number;
}) {
  const station = (s: JobState) => {
    const { count, numbers, oldestAt } = stations[s];
    const active = current === s;
    // How long the oldest job has sat in this state: where work is piling up (not shown for closed).
    const waitedDays = oldestAt !== null && s !== "closed" ? Math.floor((now - oldestAt) / 86_400_000) : null;
    return (
      <li key={s} className="min-w-0 flex-1">
        <Link
          to={active ? "/jobs" : `/jobs?state=${s}`}
          aria-current={active ? "true" : undefined}
          className={`block h-full rounded-md border px-3 py-2 ${active ? "border-accent bg-accent-soft" : "border-line bg-panel hover:bg-sunken"}`}
        >
          <span className="block truncate text-xs font-medium text-muted">{JOB_STATE_LABELS[s]}</span>
          <span className="flex items-baseline justify-between gap-1">
            <span className="font-mono text-2xl leading-tight">{count}</span>
            {waitedDays !== null ? (
              <span
                className={`text-xs ${waitedDays >= 3 ? "text-warn" : "text-muted"}`}
                title="Oldest job in this state"
              >
                {waitedDays === 0 ? "today" : `${waitedDays} d`}
              </span>
            ) : null}
          </span>
          <span className="block truncate font-mono text-xs text-muted">
            {numbers.map((n) => `#${n}`).join(" ") || "·"}
          </span>
        </Link>
      </li>
    );
  };
  return (
    <nav aria-label="Jobs by state" className="mb-6">
      <ol className="flex flex-wrap items-stretch gap-1 md:flex-nowrap">
        {LINE.map((s, i) => [
          station(s),
          i < LINE.length - 1 ? (
            <li key={`${s}-arrow`} aria-hidden="true" className="hidden self-center text-muted md:block">
              →
            </li>
          ) : null,
        ])}
      </ol>
      <ul className="mt-1 flex justify-end md:pr-[14%]">
        <li aria-hidden="true" className="self-center px-2 text-sm text-muted">
          ↳ side exit before closing
        </li>
        <li className="w-40">
          <ul>{station("declined")}</ul>
        </li>
      </ul>
    </nav>
  );
}

const STATE_TONE: Record<JobState, string> = {
  received: "bg-info-soft text-info",
  diagnosing: "bg-info-soft text-info",
  "awaiting-approval": "bg-warn-soft text-warn",
  repairing: "bg-accent-soft text-accent",
  testing: "bg-accent-soft text-accent",
  ready: "bg-ok-soft text-ok",
  closed: "bg-sunken text-muted",
  declined: "bg-bad-soft text-bad",
};

export function StateBadge({ state }: { state: JobState }) {
  return (
    <span className={`inline-block rounded px-2 py-0.5 text-xs font-medium ${STATE_TONE[state]}`}>
      {JOB_STATE_LABELS[state]}
    </span>
  );
}

const day = (ms: number) => new Date(ms).toISOString().slice(0, 10);

const columns: ColumnDef<JobListRow>[] = [
  {
    accessorKey: "number",
    header: "Job",
    cell: (c) => (
      <Link className="link font-mono" to={`/jobs/${c.row.original.id}`}>
        #{c.row.original.number}
      </Link>
    ),
  },
  { accessorKey: "state", header: "State", cell: (c) => <StateBadge state={c.row.original.state} /> },
  { accessorKey: "customerName", header: "Customer", cell: (c) => c.getValue<string | null>() ?? "—" },
  { accessorKey: "board", header: "Board", cell: (c) => c.getValue<string | null>() ?? "—" },
  {
    accessorKey: "serial",
    header: "Serial",
    cell: (c) => <span className="font-mono">{c.getValue<string>()}</span>,
  },
  { accessorKey: "complaint", header: "Complaint" },
  { accessorKey: "assignedName", header: "Technician", cell: (c) => c.getValue<string | null>() ?? "—" },
  {
    accessorKey: "createdAt",
    header: "Taken in",
    cell: (c) => day(c.getValue<number>()),
    enableGlobalFilter: false,
  },
];

/** The closed list adds when each job closed, and opens sorted by it: the order the server chose them in. */
const closedColumns: ColumnDef<JobListRow>[] = [
  ...columns,
  {
    accessorKey: "closedAt",
    header: "Closed",
    cell: (c) => {
      const at = c.getValue<number | null>();
      return at === null ? "—" : day(at);
    },
    enableGlobalFilter: false,
  },
];

function JobTable({
  rows,
  caption,
  closed,
  onClear,
}: {
  rows: JobListRow[];
  caption: string;
  closed: boolean;
  onClear?: () => void;
}) {
  const [globalFilter, setGlobalFilter] = useState("");
  const [techFilter, setTechFilter] = useState("");
  const techs = [...new Set(rows.map((r) => r.assignedName).filter((n): n is string => !!n))].sort();
  // Closed jobs: the last closed first (a job that waited weeks for parts closes long after its number).
  const [sorting, setSorting] = useState<SortingState>([
    closed ? { id: "closedAt", desc: true } : { id: "number", desc: true },
  ]);
  const table = useReactTable({
    data: rows,
    columns: closed ? closedColumns : columns,
    state: {
      globalFilter,
      sorting,
      columnFilters: techFilter ? [{ id: "assignedName", value: techFilter }] : [],
    },
    onGlobalFilterChange: setGlobalFilter,
    onSortingChange: setSorting,
    globalFilterFn: "includesString",
    defaultColumn: { filterFn: "equalsString" },
    getCoreRowModel: getCoreRowModel(),
    getFilteredRowModel: getFilteredRowModel(),
    getSortedRowModel: getSortedRowModel(),
  });
  return (
    <section className="card">
      <div className="mb-3 flex flex-wrap items-end gap-3">
        <h2 className="font-semibold">{caption}</h2>
        {onClear ? (
          <button type="button" className="link text-sm" onClick={onClear}>
            show open jobs
          </button>
        ) : null}
        <div className="ml-auto flex flex-col gap-1">
          <label htmlFor="tech-filter" className="text-sm font-medium">
            Technician
          </label>
          <select
            id="tech-filter"
            className="field-input w-44"
            value={techFilter}
            onChange={(e) => setTechFilter(e.target.value)}
          >
            <option value="">Anyone</option>
            {techs.map((t) => (
              <option key={t} value={t}>
                {t}
              </option>
            ))}
          </select>
        </div>
        <div className="flex flex-col gap-1">
          <label htmlFor="job-filter" className="text-sm font-medium">
            Filter
          </label>
          <input
            id="job-filter"
            type="search"
            className="field-input w-64"
            placeholder="Customer, serial, complaint…"
            value={globalFilter}
            onChange={(e) => setGlobalFilter(e.target.value)}
          />
        </div>
      </div>
      <div className="overflow-x-auto">
        <table className="w-full text-left text-sm">
          <thead className="text-muted">
            {table.getHeaderGroups().map((g) => (
              <tr key={g.id}>
                {g.headers.map((h) => (
                  <th
                    key={h.id}
                    className="py-2 pr-3 font-medium"
                    aria-sort={
                      h.column.getIsSorted() === "asc"
                        ? "ascending"
                        : h.column.getIsSorted() === "desc"
                          ? "descending"
                          : undefined
                    }
                  >
                    <button
                      type="button"
                      className="hover:text-ink"
                      onClick={h.column.getToggleSortingHandler()}
                    >
                      {flexRender(h.column.columnDef.header, h.getContext())}
                      {h.column.getIsSorted() === "asc"
                        ? " ↑"
                        : h.column.getIsSorted() === "desc"
                          ? " ↓"
                          : ""}
                    </button>
                  </th>
                ))}
              </tr>
            ))}
          </thead>
          <tbody>
            {table.getRowModel().rows.map((r) => (
              <tr key={r.id} className="border-t border-line">
                {r.getVisibleCells().map((c) => (
                  <td key={c.id} className="py-2 pr-3 align-top">
                    {flexRender(c.column.columnDef.cell, c.getContext())}
                  </td>
                ))}
              </tr>
            ))}
          </tbody>
        </table>
        {table.getRowModel().rows.length === 0 ? (
          <p className="py-4 text-sm text-muted">No jobs match.</p>
        ) : null}
      </div>
    </section>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Jobs · Railwise" }];
