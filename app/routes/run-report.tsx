import { Link } from "react-router";
import { CautionList } from "~/components/caution-list";
import { cautionsFor, CONDITION_LABELS, fixKindsOfRun, OUTCOME_LABELS, STRATEGY_LABELS } from "~/lib/walker";
import { notFound, requireMember } from "~/server/auth.server";
import { getRunView } from "~/server/runs.server";
import type { Route } from "./+types/run-report";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { shop } = await requireMember(request, { permission: "view:runs" });
  const view = await getRunView(shop.id, params.runId);
  if (!view) notFound("That run");
  // Every fix recorded in the run counts: a "still dead" round may have had hot air, the next one a clean.
  const cautions = cautionsFor({
    batteryAttached: view.run.condition !== "charger",
    resistanceReadings: view.readings.some((r) => r.mode !== "voltage" && !r.skipped),
    fixKinds: fixKindsOfRun(view.findingRows),
  });
  return { view, cautions, printedAt: Date.now() };
}

const when = (ms: number | null) =>
  ms ? `${new Date(ms).toISOString().slice(0, 16).replace("T", " ")} UTC` : "—";

export default function RunReportRoute({ loaderData }: Route.ComponentProps) {
  const { view, cautions } = loaderData;
  return (
    <article className="mx-auto flex max-w-4xl flex-col gap-5 print:max-w-none">
      <div className="no-print flex flex-wrap gap-2">
        <Link className="btn" to={`/runs/${view.run.id}`}>
          Back to the run
        </Link>
        <button type="button" className="btn btn-primary" onClick={() => window.print()}>
          Print or save as PDF
        </button>
      </div>
      <header>
        <h1 className="text-2xl font-semibold">Repair report</h1>
        <p className="text-muted">
          {view.board?.label} · board {view.board?.boardNumber}
          {view.board?.revision ? ` rev ${view.board.revision}` : ""}
          {view.job ? ` · job #${view.job.number}` : ""}
        </p>
      </header>
      <dl className="grid grid-cols-2 gap-3 text-sm md:grid-cols-4">
        <div>
          <dt className="text-muted">Technician</dt>
          <dd>{view.run.techName}</dd>
        </div>
        <div>
          <dt className="text-muted">Started</dt>
          <dd>{when(view.run.startedAt)}</dd>
        </div>
        <div>
          <dt className="text-muted">Isolated</dt>
          <dd>{when(view.run.isolatedAt)}</dd>
        </div>
        <div>
          <dt className="text-muted">Closed</dt>
          <dd>{when(view.run.closedAt)}</dd>
        </div>
        <div>
          <dt className="text-muted">Map</dt>
          <dd>
            {view.version.mapName} v{view.version.number}
          </dd>
        </div>
        <div>
          <dt className="text-muted">Strategy</dt>
          <dd>{STRATEGY_LABELS[view.run.strategy]}</dd>
        </div>
        <div>
          <dt className="text-muted">Condition</dt>
          <dd>{CONDITION_LABELS[view.run.condition]}</dd>
        </div>
        <div>
          <dt className="text-muted">Outcome</dt>
          <dd data-testid="report-outcome">
            {view.run.outcome ? OUTCOME_LABELS[view.run.outcome] : "not recorded"}
          </dd>
        </div>
      </dl>
      {view.job?.complaint ? (
        <p className="text-sm">
          <span className="text-muted">Complaint: </span>
          {view.job.complaint}
        </p>
      ) : null}

      <section aria-labelledby="findings-title">
        <h2 id="findings-title" className="text-lg font-semibold">
          Finding and fix
        </h2>
        {view.findingRows.length === 0 ? <p className="text-sm text-muted">No finding yet.</p> : null}
        <ul className="mt-2 flex flex-col gap-2 text-sm" data-testid="report-findings">
          {view.findingRows.map((f) => {
            const fix = f.part?.fixes.find((x) => x.id === f.fixKind);
            return (
              <li key={f.id} className="rounded-md border border-line p-3">
                <p className="font-medium">
                  {view.findingRows.length > 1 ? `Round ${f.round}: ` : ""}
                  {f.kind === "no-fault-found"
                    ? "No fault found in this map"
                    : f.kind === "short"
                      ? `Short to ground on ${f.part?.name ?? f.nodeId}`
                      : `${f.part?.refdes ?? ""} ${f.part?.name ?? f.nodeId} failed`}
                </p>
                <p>
                  Fix: {fix?.label ?? (f.fixKind === "other" ? "other (see notes)" : (f.fixKind ?? "—"))} ·
                  parts used: {f.partsUsed.length ? f.partsUsed.join(", ") : "none"} · outcome:{" "}
                  {f.outcome ? OUTCOME_LABELS[f.outcome] : "—"}
                  {f.recordedBy ? ` · recorded by ${f.recordedBy}` : ""}
                </p>
              </li>
            );
          })}
        </ul>
        {view.finding && view.run.status !== "closed" ? (
          <p className="mt-2 text-sm">Current: {view.finding.message}</p>
        ) : null}
      </section>

      <section aria-labelledby="readings-title">
        <h2 id="readings-title" className="text-lg font-semibold">
          Readings
        </h2>
        <table className="mt-2 w-full text-left text-sm">
          <thead className="border-b border-line text-muted">
            <tr>
              <th className="py-1 pr-3 font-medium">#</th>
              <th className="py-1 pr-3 font-medium">Net</th>
              <th className="py-1 pr-3 font-medium">Mode</th>
              <th className="py-1 pr-3 font-medium">Reading</th>
              <th className="py-1 pr-3 font-medium">Expected</th>
              <th className="py-1 pr-3 font-medium">Verdict</th>
              <th className="py-1 pr-3 font-medium">By, at</th>
            </tr>
          </thead>
          <tbody>
            {view.readings.map((r) => (
              <tr key={r.id} className="border-b border-line">
                <td className="py-1 pr-3">{r.seq}</td>
                <td className="py-1 pr-3 font-mono">{r.netName}</td>
                <td className="py-1 pr-3">{r.mode}</td>
                <td className="py-1 pr-3 font-mono">
                  {r.valueText}
                  {r.replacesId ? " (correction)" : ""}
                </td>
                <td className="py-1 pr-3">{r.windowText}</td>
                <td className="py-1 pr-3">{r.verdict}</td>
                <td className="py-1 pr-3">
                  {r.takenBy}, {when(r.takenAt)}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </section>

      {view.notes.length ? (
        <section aria-labelledby="report-notes">
          <h2 id="report-notes" className="text-lg font-semibold">
            Notes
          </h2>
          <ul className="mt-1 text-sm">
            {view.notes.map((n) => (
              <li key={n.id} className="break-inside-avoid">
                {n.author}: {n.text}
                {n.photoId ? (
                  <img
                    src={`/uploads/${n.photoId}`}
                    alt={`Attached by ${n.author}: ${n.text.slice(0, 80)}`}
                    className="mt-1 max-h-48 rounded border border-line"
                  />
                ) : null}
              </li>
            ))}
          </ul>
        </section>
      ) : null}

      <section aria-labelledby="safety-title" className="rounded-md border border-warn bg-warn-soft p-4">
        <h2 id="safety-title" className="text-lg font-semibold">
          Safety
        </h2>
        <CautionList cautions={cautions} />
      </section>
    </article>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [
  {
    title: data?.view?.board
      ? `Repair report · ${data.view.board.boardNumber} · Railwise`
      : "Repair report · Railwise",
  },
];
