import { parseWithZod } from "@conform-to/zod/v4";
import { and, count, desc, eq, isNotNull, sql } from "drizzle-orm";
import { data, Form, Link } from "react-router";
import { z } from "zod";
import { BoardFormFields } from "~/components/board-form";
import { PageHeader } from "~/components/page-header";
import { useMember } from "~/components/use-member";
import { fullChargeVolts } from "~/lib/battery";
import { BoardFormSchema, INPUT_LABEL } from "~/lib/board-schemas";
import { can } from "~/lib/permissions";
import { audit } from "~/server/audit.server";
import { notFound, requireMember } from "~/server/auth.server";
import { db } from "~/server/db.server";
import { createMap } from "~/server/maps.server";
import { boards, findings, maps, mapVersions, runs } from "~/server/schema.server";
import { redirectWithToast } from "~/server/toast.server";
import type { Route } from "./+types/board";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { shop } = await requireMember(request, { permission: "view:maps" });
  const board = await db
    .select()
    .from(boards)
    .where(and(eq(boards.id, params.boardId), eq(boards.shopId, shop.id)))
    .get();
  if (!board) notFound("That board");
  const boardMaps = await db
    .select({
      id: maps.id,
      name: maps.name,
      draftRevision: maps.draftRevision,
      draftUpdatedAt: maps.draftUpdatedAt,
    })
    .from(maps)
    .where(and(eq(maps.boardId, board.id), eq(maps.shopId, shop.id)))
    .all();
  const versions = await db
    .select({
      id: mapVersions.id,
      mapId: mapVersions.mapId,
      number: mapVersions.number,
      note: mapVersions.note,
      publishedAt: mapVersions.publishedAt,
    })
    .from(mapVersions)
    .innerJoin(maps, eq(maps.id, mapVersions.mapId))
    .where(and(eq(maps.boardId, board.id), eq(mapVersions.shopId, shop.id)))
    .orderBy(desc(mapVersions.publishedAt), desc(mapVersions.number))
    .all();
  const recentRuns = await db
    .select({
      id: runs.id,
      status: runs.status,
      outcome: runs.outcome,
      startedAt: runs.startedAt,
      versionNumber: mapVersions.number,
    })
    .from(runs)
    .innerJoin(mapVersions, eq(mapVersions.id, runs.mapVersionId))
    .where(and(eq(runs.shopId, shop.id), eq(runs.boardId, board.id)))
    .orderBy(desc(runs.startedAt))
    .limit(10)
    .all();
  const topFindings = await db
    .select({
      nodeId: findings.nodeId,
      kind: findings.kind,
      n: count(),
      // The node's name as the map version of each finding calls it (ids are stable, names may change). The
      // outer columns are named with their table: unqualified, they would resolve to the subquery's own.
      label: sql<
        string | null
      >`max((select coalesce(v.refdes || ' · ' || v.node_name, v.node_name) from map_version_nodes v where v.map_version_id = "findings"."map_version_id" and v.node_id = "findings"."node_id"))`,
    })
    .from(findings)
    .where(and(eq(findings.shopId, shop.id), eq(findings.boardId, board.id), isNotNull(findings.nodeId)))
    .groupBy(findings.nodeId, findings.kind)
    .orderBy(desc(count()))
    .limit(8)
    .all();
  return { board, maps: boardMaps, versions, recentRuns, topFindings };
}

const MapNameSchema = z.object({
  intent: z.literal("create-map"),
  name: z.string().trim().min(1, "Name the map.").max(120),
});

export async function action({ request, params }: Route.ActionArgs) {
  const { shop, user, role } = await requireMember(request, { permission: "view:maps" });
  const formData = await request.formData();
  const intent = formData.get("intent");
  const board = await db
    .select({ id: boards.id, archivedAt: boards.archivedAt })
    .from(boards)
    .where(and(eq(boards.id, params.boardId), eq(boards.shopId, shop.id)))
    .get();
  const need = intent === "create-map" ? "edit:maps" : "edit:boards";
  if (!can(role, need)) throw new Response("Your role in this shop does not allow this.", { status: 403 });
  if (!board) notFound("That board");

  if (intent === "edit") {
    const submission = parseWithZod(formData, { schema: BoardFormSchema });
    if (submission.status !== "success") return data({ intent, result: submission.reply() }, { status: 400 });
    const v = submission.value;
    await db
      .update(boards)
      .set({
        maker: v.maker,
        model: v.model,
        boardNumber: v.boardNumber,
        revision: v.revision,
        inputType: v.inputType,
        inputMillivolts: v.inputVolts,
        batteryCells: v.batteryCells,
        notes: v.notes,
      })
      .where(and(eq(boards.id, board.id), eq(boards.shopId, shop.id)));
    await audit({ shopId: shop.id, actorId: user.id, action: "board.updated", subject: board.id });
    return redirectWithToast(`/boards/${board.id}`, { kind: "success", message: "Board saved." });
  }
  if (intent === "archive" || intent === "unarchive") {
    await db
      .update(boards)
      .set({ archivedAt: intent === "archive" ? new Date() : null })
      .where(and(eq(boards.id, board.id), eq(boards.shopId, shop.id)));
    await audit({ shopId: shop.id, actorId: user.id, action: `board.${intent}d`, subject: board.id });
    return redirectWithToast(intent === "archive" ? "/boards" : `/boards/${board.id}`, {
      kind: "success",
      message: intent === "archive" ? "Board archived; its maps and runs are kept." : "Board restored.",
    });
  }
  if (intent === "create-map") {
    const v = MapNameSchema.safeParse(Object.fromEntries(formData));
    if (!v.success)
      return data(
        { intent, result: null, error: v.error.issues[0]?.message ?? "Name the map." },
        { status: 400 },
      );
    const id = await createMap({ shopId: shop.id, boardId: board.id, name: v.data.name, userId: user.id });
    return redirectWithToast(`/maps/${id}`, { kind: "success", message: `Created the map ${v.data.name}.` });
  }
  return data({ intent: null, result: null }, { status: 400 });
}

export default function BoardRoute({ loaderData, actionData }: Route.ComponentProps) {
  const { board, maps, versions, recentRuns, topFindings } = loaderData;
  const { can } = useMember();
  const full = fullChargeVolts(board.batteryCells);
  const mapError = actionData && "error" in actionData ? (actionData.error as string) : null;
  // A run needs a published version to pin; an archived board is kept for its history, not for new work.
  const canRun = can("run:diagnosis") && versions.length > 0 && !board.archivedAt;
  return (
    <>
      <p className="mb-2 text-sm">
        <Link className="link" to="/boards">
          Boards
        </Link>
      </p>
      <PageHeader
        title={`${board.maker} ${board.model}`}
        subtitle={`Board ${board.boardNumber}${board.revision ? ` rev ${board.revision}` : ""}${board.archivedAt ? " · archived" : ""}`}
        actions={
          canRun || can("edit:boards") ? (
            <>
              {canRun ? (
                <Link className="btn btn-primary" to={`/runs/new?boardId=${encodeURIComponent(board.id)}`}>
                  Start a run
                </Link>
              ) : null}
              {can("edit:boards") ? (
                <Form method="post">
                  <input type="hidden" name="intent" value={board.archivedAt ? "unarchive" : "archive"} />
                  <button type="submit" className="btn">
                    {board.archivedAt ? "Restore board" : "Archive board"}
                  </button>
                </Form>
              ) : null}
            </>
          ) : undefined
        }
      />
      <dl className="card mb-6 grid grid-cols-2 gap-4 text-sm md:grid-cols-4">
        <div>
          <dt className="text-muted">Input</dt>
          <dd>
            {INPUT_LABEL[board.inputType]} {Number((board.inputMillivolts / 1000).toFixed(2))} V
          </dd>
        </div>
        <div>
          <dt className="text-muted">Battery</dt>
          <dd>{board.batteryCells ? `${board.batteryCells} cells in series` : "none"}</dd>
        </div>
        <div>
          <dt className="text-muted">Full charge</dt>
          <dd>{full ? `${full.toFixed(1)} V (4.2 V per cell)` : "—"}</dd>
        </div>
        <div>
          <dt className="text-muted">Notes</dt>
          <dd className="whitespace-pre-line">{board.notes || "—"}</dd>
        </div>
      </dl>
      {board.batteryCells ? (
        <p className="mb-6 rounded-md border border-warn bg-warn-soft p-3 text-sm">
          Safety: disconnect the battery before rework or hot air near it; a damaged Li-ion pack can vent or
          burn. Follow your shop's and local rules for handling and disposing of lithium cells.
        </p>
      ) : null}
      <div className="grid gap-6 lg:grid-cols-2">
        <section className="card" aria-label="Maps">
          <h2 className="mb-3 font-semibold">Maps</h2>
          {maps.length === 0 ? <p className="text-sm text-muted">No map for this board yet.</p> : null}
          <ul className="flex flex-col gap-2 text-sm">
            {maps.map((m) => {
              const mv = versions.filter((v) => v.mapId === m.id);
              return (
                <li key={m.id}>
                  <Link className="link font-medium" to={`/maps/${m.id}`}>
                    {m.name}
                  </Link>{" "}
                  <span className="text-muted">
                    {mv.length ? `published v${mv[0].number}` : "draft only"} · draft revision{" "}
                    {m.draftRevision}
                  </span>
                </li>
              );
            })}
          </ul>
          {can("edit:maps") ? (
            <Form method="post" className="mt-4 flex flex-wrap items-end gap-2">
              <input type="hidden" name="intent" value="create-map" />
              <label className="flex flex-col gap-1 text-sm">
                <span className="font-medium">New map name</span>
                <input
                  name="name"
                  className="field-input"
                  required
                  maxLength={120}
                  aria-invalid={mapError ? true : undefined}
                />
              </label>
              <button type="submit" className="btn">
                Create map
              </button>
              {mapError ? <p className="w-full text-sm text-bad">{mapError}</p> : null}
            </Form>
          ) : null}
        </section>
        <section className="card" aria-label="Versions">
          <h2 className="mb-3 font-semibold">Published versions</h2>
          {versions.length === 0 ? (
            <p className="text-sm text-muted">Nothing published yet: runs start from a published version.</p>
          ) : null}
          <ul className="flex flex-col gap-1 text-sm">
            {versions.map((v) => (
              <li key={v.id}>
                <span className="font-mono">v{v.number}</span> of {maps.find((m) => m.id === v.mapId)?.name}:{" "}
                {v.note}{" "}
                <span className="text-muted">({new Date(v.publishedAt).toLocaleDateString("en-CA")})</span>
              </li>
            ))}
          </ul>
        </section>
        <section className="card" aria-label="Recent runs">
          <h2 className="mb-3 font-semibold">Recent runs</h2>
          {recentRuns.length === 0 ? (
            <p className="text-sm text-muted">No diagnosis run on this board yet.</p>
          ) : null}
          <ul className="flex flex-col gap-1 text-sm">
            {recentRuns.map((r) => (
              <li key={r.id}>
                <Link className="link" to={`/runs/${r.id}`}>
                  {new Date(r.startedAt).toLocaleString("en-CA")}
                </Link>{" "}
                · map v{r.versionNumber} · {r.status}
                {r.outcome ? ` · ${r.outcome}` : ""}
              </li>
            ))}
          </ul>
        </section>
        <section className="card" aria-label="Top findings">
          <h2 className="mb-3 font-semibold">Top findings</h2>
          {topFindings.length === 0 ? <p className="text-sm text-muted">No findings recorded yet.</p> : null}
          <ul className="flex flex-col gap-1 text-sm">
            {topFindings.map((f) => (
              <li key={`${f.nodeId}-${f.kind}`}>
                <span className="font-medium">{f.label ?? f.nodeId}</span> ·{" "}
                {f.kind === "short" ? "short to ground" : f.kind} · {f.n} time{f.n === 1 ? "" : "s"}
              </li>
            ))}
          </ul>
        </section>
      </div>
      {can("edit:boards") ? (
        <details className="card mt-6" open={actionData?.intent === "edit"}>
          <summary className="cursor-pointer font-semibold">Edit board details</summary>
          <div className="mt-4">
            <BoardFormFields
              id="board-edit"
              intent="edit"
              lastResult={actionData?.intent === "edit" ? actionData.result : undefined}
              submitLabel="Save board"
              defaults={{
                maker: board.maker,
                model: board.model,
                boardNumber: board.boardNumber,
                revision: board.revision,
                inputType: board.inputType,
                inputVolts: `${board.inputMillivolts / 1000} V`,
                batteryCells: String(board.batteryCells),
                notes: board.notes,
              }}
            />
          </div>
        </details>
      ) : null}
    </>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [
  { title: data ? `${data.board.maker} ${data.board.model} · Railwise` : "Board · Railwise" },
];
