import { Link } from "react-router";
import { EmptyState, PageHeader } from "~/components/page-header";
import { can } from "~/lib/permissions";
import { OUTCOME_LABELS, STRATEGY_LABELS } from "~/lib/walker";
import { requireMember } from "~/server/auth.server";
import { listNotices, listRuns } from "~/server/runs.server";
import type { Route } from "./+types/runs";

export async function loader({ request }: Route.LoaderArgs) {
  const { shop, user, role } = await requireMember(request, { permission: "view:runs" });
  const [runs, notices] = await Promise.all([listRuns(shop.id), listNotices(shop.id, user.id, 10)]);
  return {
    runs: runs.map((r) => ({ ...r, startedAt: r.startedAt.getTime(), escalated: !!r.escalatedAt })),
    notices: notices.map((n) => ({
      id: n.id,
      text: n.text,
      runId: n.runId,
      unread: !n.readAt,
      at: n.createdAt.getTime(),
    })),
    canStart: can(role, "run:diagnosis"),
  };
}

const STATUS_LABELS = {
  open: "In progress",
  isolated: "Fault isolated",
  "no-fault-found": "No fault found in map",
  closed: "Closed",
} as const;

export default function RunsRoute({ loaderData }: Route.ComponentProps) {
  const { runs, notices, canStart } = loaderData;
  return (
    <>
      <PageHeader
        title="Runs"
        subtitle="Guided diagnoses at the bench, one reading at a time."
        actions={
          canStart ? (
            <Link className="btn btn-primary" to="/runs/new">
              Start a run
            </Link>
          ) : undefined
        }
      />
      {notices.length ? (
        <section className="card mb-6" aria-labelledby="notices-title">
          <h2 id="notices-title" className="font-semibold">
            Notices
          </h2>
          <ul className="mt-2 flex flex-col gap-1 text-sm">
            {notices.map((n) => (
              <li key={n.id} className={n.unread ? "font-medium" : "text-muted"}>
                {n.unread ? (
                  <span className="mr-2 rounded bg-accent px-1.5 text-xs text-on-accent">new</span>
                ) : null}
                {n.runId ? (
                  <Link className="link" to={`/runs/${n.runId}`}>
                    {n.text}
                  </Link>
                ) : (
                  n.text
                )}
              </li>
            ))}
          </ul>
        </section>
      ) : null}
      {runs.length === 0 ? (
        <EmptyState title="No runs yet">A run starts from a board's published power-up map.</EmptyState>
      ) : (
        <div className="card overflow-x-auto p-0">
          <table className="w-full text-left text-sm">
            <thead className="border-b border-line text-muted">
              <tr>
                <th className="px-4 py-2 font-medium">Board</th>
                <th className="px-4 py-2 font-medium">Job</th>
                <th className="px-4 py-2 font-medium">Technician</th>
                <th className="px-4 py-2 font-medium">Strategy</th>
                <th className="px-4 py-2 font-medium">Readings</th>
                <th className="px-4 py-2 font-medium">Status</th>
                <th className="px-4 py-2 font-medium">Started</th>
              </tr>
            </thead>
            <tbody>
              {runs.map((r) => (
                <tr key={r.id} className="border-b border-line last:border-0">
                  <td className="px-4 py-2">
                    <Link className="link" to={`/runs/${r.id}`}>
                      {r.boardNumber} · {r.boardLabel}
                    </Link>
                  </td>
                  <td className="px-4 py-2">{r.jobNumber ? `#${r.jobNumber}` : "—"}</td>
                  <td className="px-4 py-2">{r.techName ?? ""}</td>
                  <td className="px-4 py-2">{STRATEGY_LABELS[r.strategy]}</td>
                  <td className="px-4 py-2">{r.readingCount}</td>
                  <td className="px-4 py-2">
                    {STATUS_LABELS[r.status]}
                    {r.outcome ? ` · ${OUTCOME_LABELS[r.outcome]}` : ""}
                    {r.escalated && r.status !== "closed" ? " · help asked" : ""}
                  </td>
                  <td className="px-4 py-2 whitespace-nowrap">
                    {new Date(r.startedAt).toISOString().slice(0, 16).replace("T", " ")}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Runs · Railwise" }];
