import "@xyflow/react/dist/style.css";
import { and, eq } from "drizzle-orm";
import { useCallback, useEffect, useRef, useState } from "react";
import { data, Link, type ShouldRevalidateFunctionArgs, useFetcher } from "react-router";
import { z } from "zod";
import { type DraftReplaceHandle, MapEditor, type SaveResult } from "~/components/map-editor/editor";
import { useMember } from "~/components/use-member";
import { MAX_MAP_JSON_CHARS, mapFromJson, validateMap, type ValidationIssue } from "~/lib/engine";
import { MapChangesSchema } from "~/lib/map-changes";
import { layoutDocument, withPositions } from "~/lib/map-layout";
import { audit } from "~/server/audit.server";
import { can } from "~/lib/permissions";
import { requireMember } from "~/server/auth.server";
import { db } from "~/server/db.server";
import { readFormWithin } from "~/server/form-body.server";
import {
  draftDocument,
  getMapForShop,
  getVersion,
  listVersions,
  publishDraft,
  replaceDraft,
  saveDraftChanges,
  staleMessage,
} from "~/server/maps.server";
import { unpublishedChanges } from "~/server/map-draft-base.server";
import { addRunNote, getRunEvidence, type RunEvidence } from "~/server/runs.server";
import { boards } from "~/server/schema.server";
import type { Route } from "./+types/map-editor";

/** An imported file larger than this is refused before parsing (a 2000-node map is well under it). */
export const MAX_IMPORT_BYTES = 2_000_000;
const FORM_FIELDS_BYTES = 64_000;
/**
 * Most an editor request may carry on the wire: the import limit's worth of map text plus the other fields.
 * A urlencoded form turns each quote, brace and newline of JSON into %XX, so it may take up to three times that.
 */
export function maxEditorBodyBytes(contentType: string | null) {
  const multipart = (contentType ?? "").toLowerCase().startsWith("multipart/form-data");
  return (multipart ? 1 : 3) * MAX_IMPORT_BYTES + FORM_FIELDS_BYTES;
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const { shop, role } = await requireMember(request, { permission: "view:maps" });
  const map = await getMapForShop(shop.id, params.mapId);
  // A lead extending the map from a run that ended with no fault found sees that run's readings beside it.
  const fromRunId = new URL(request.url).searchParams.get("fromRun");
  const fromRun =
    fromRunId && can(role, "edit:maps") ? await getRunEvidence(shop.id, fromRunId, map.id) : null;
  const board = await db
    .select({
      id: boards.id,
      maker: boards.maker,
      model: boards.model,
      boardNumber: boards.boardNumber,
      revision: boards.revision,
    })
    .from(boards)
    .where(and(eq(boards.id, map.boardId), eq(boards.shopId, shop.id)))
    .get();
  const versions = await listVersions(shop.id, map.id);
  // ?version=N shows that published version read-only (to look at it, print or export its picture).
  const wanted = new URL(request.url).searchParams.get("version");
  let viewing: { number: number; note: string; publishedAt: Date } | null = null;
  let doc = draftDocument(map.draft);
  if (wanted !== null) {
    const number = Number(wanted);
    if (!Number.isInteger(number) || number < 1)
      throw new Response("Ask for a published version by its number, such as 1.", { status: 400 });
    const v = await getVersion(shop.id, map.id, number);
    viewing = { number: v.number, note: v.note, publishedAt: v.publishedAt };
    doc = v.document;
  }
  // Maps written without positions (seeded or imported) are laid out here, so everyone sees the same picture.
  if (doc.nodes.some((n) => !n.position)) doc = withPositions(doc, layoutDocument(doc), true);
  return {
    map: { id: map.id, name: map.name, revision: map.draftRevision, updatedAt: map.draftUpdatedAt },
    board,
    doc,
    viewing,
    versions,
    role,
    fromRun,
  };
}

const RevisionSchema = z.coerce.number().int().min(0);
const SaveSchema = z.object({
  intent: z.literal("save"),
  revision: RevisionSchema,
  changes: z.string().max(MAX_MAP_JSON_CHARS),
});
const PublishSchema = z.object({
  intent: z.literal("publish"),
  revision: RevisionSchema,
  note: z.string().trim().min(1, "Say what changed in this version.").max(500),
  fromRun: z.string().max(64).optional(),
});
const ImportSchema = z.object({ intent: z.literal("import"), revision: RevisionSchema, json: z.string() });
const FromVersionSchema = z.object({
  intent: z.literal("draft-from-version"),
  revision: RevisionSchema,
  number: z.coerce.number().int().min(1),
  // Given once the lead has agreed to drop the draft's unpublished changes.
  confirm: z.literal("1").optional(),
});
const ActionSchema = z.discriminatedUnion("intent", [
  SaveSchema,
  PublishSchema,
  ImportSchema,
  FromVersionSchema,
]);

type Refusal = {
  ok: false;
  message: string;
  conflict?: boolean;
  needsConfirm?: boolean;
  revision?: number;
  issues?: ValidationIssue[];
};
const refuse = (status: number, body: Omit<Refusal, "ok">) =>
  data<Refusal>({ ok: false, ...body }, { status });

export async function action({ request, params }: Route.ActionArgs) {
  const { shop, user } = await requireMember(request, { permission: "edit:maps" });
  const map = await getMapForShop(shop.id, params.mapId);
  const body = await readFormWithin(
    request,
    maxEditorBodyBytes(request.headers.get("Content-Type")),
    `the map editor takes at most ${MAX_IMPORT_BYTES / 1_000_000} MB of map data at a time`,
  );
  if (!body.ok) return refuse(body.status, { message: body.message });
  const parsed = ActionSchema.safeParse(Object.fromEntries(body.form));
  if (!parsed.success)
    return refuse(400, { message: parsed.error.issues[0]?.message ?? "Not a valid request." });
  const input = parsed.data;

  if (input.intent === "save") {
    let raw: unknown;
    try {
      raw = JSON.parse(input.changes);
    } catch {
      return refuse(400, { message: "The changes were not valid JSON." });
    }
    const changes = MapChangesSchema.safeParse(raw);
    if (!changes.success)
      return refuse(400, {
        message: `The change could not be saved: ${changes.error.issues
          .slice(0, 3)
          .map((i) => `${i.path.join(".")}: ${i.message}`)
          .join("; ")}`,
      });
    const r = await saveDraftChanges({
      shopId: shop.id,
      mapId: map.id,
      userId: user.id,
      baseRevision: input.revision,
      changes: changes.data,
    });
    if (!r.ok)
      return refuse(r.status, { message: r.message, conflict: r.status === 409, revision: r.revision });
    return data<SaveResult>({ ok: true, revision: r.revision });
  }

  if (input.intent === "publish") {
    const r = await publishDraft({
      shopId: shop.id,
      mapId: map.id,
      userId: user.id,
      baseRevision: input.revision,
      note: input.note,
    });
    if (!r.ok)
      return refuse(r.status, {
        message: r.message,
        conflict: r.status === 409,
        revision: r.revision,
        issues: r.issues,
      });
    // Close the loop with the run the lead extended the map from: its tech gets a note and a notice.
    let told = false;
    if (input.fromRun) {
      const run = await getRunEvidence(shop.id, input.fromRun, map.id);
      if (run.ok) {
        await addRunNote({
          shopId: shop.id,
          userId: user.id,
          runId: run.evidence.runId,
          kind: "lead-note",
          text: `The map was extended after this run and published as version ${r.number}: ${input.note}`,
        });
        told = true;
      }
    }
    return data({
      ok: true as const,
      revision: r.revision,
      published: r.number,
      message: `Published version ${r.number}.${told ? " The run's technician was told." : ""}`,
    });
  }

  if (input.intent === "import") {
    if (input.json.length > MAX_IMPORT_BYTES)
      return refuse(413, {
        message: `The file is ${Math.round(input.json.length / 1000)} kB; at most ${MAX_IMPORT_BYTES / 1_000_000} MB can be imported. Nothing was changed.`,
      });
    const doc = mapFromJson(input.json);
    if (!doc.ok) return refuse(400, { message: `${doc.error.message} Nothing was changed.` });
    const report = validateMap(doc.value);
    if (!report.ok) return refuse(400, { message: report.error.message });
    const errors = report.value.issues.filter((i) => i.severity === "error");
    if (errors.length)
      return refuse(422, {
        message: `The imported map has ${errors.length} error${errors.length === 1 ? "" : "s"}; nothing was changed.`,
        issues: errors.slice(0, 50),
      });
    const r = await replaceDraft({
      shopId: shop.id,
      mapId: map.id,
      userId: user.id,
      baseRevision: input.revision,
      doc: doc.value,
    });
    if (!r.ok)
      return refuse(r.status, { message: r.message, conflict: r.status === 409, revision: r.revision });
    await audit({ shopId: shop.id, actorId: user.id, action: "map.imported", subject: map.id });
    return data({ ok: true as const, revision: r.revision, message: "Imported the map into the draft." });
  }

  const version = await getVersion(shop.id, map.id, input.number);
  if (!input.confirm) {
    if (map.draftRevision !== input.revision)
      return refuse(409, {
        message: staleMessage(map.draftRevision),
        conflict: true,
        revision: map.draftRevision,
      });
    const lost = await unpublishedChanges(shop.id, map.id, draftDocument(map.draft));
    if (lost)
      return refuse(409, {
        needsConfirm: true,
        revision: map.draftRevision,
        message: `The draft has changes that are in no published version (${lost.base ? `since version ${lost.base}: ` : ""}${lost.summary}). Starting again from version ${version.number} drops them.`,
      });
  }
  const r = await replaceDraft({
    shopId: shop.id,
    mapId: map.id,
    userId: user.id,
    baseRevision: input.revision,
    doc: version.document,
  });
  if (!r.ok)
    return refuse(r.status, { message: r.message, conflict: r.status === 409, revision: r.revision });
  return data({
    ok: true as const,
    revision: r.revision,
    message: `The draft now starts from version ${version.number}.`,
  });
}

// Autosaves answer with a revision only: re-running the loader would send the whole document back.
export function shouldRevalidate({
  formData,
  formAction,
  defaultShouldRevalidate,
}: ShouldRevalidateFunctionArgs) {
  if (formData?.get("intent") === "save") return false;
  if (formAction?.endsWith("/photos")) return false;
  return defaultShouldRevalidate;
}

function slug(name: string) {
  return (
    name
      .toLowerCase()
      .replace(/[^a-z0-9]+/g, "-")
      .replace(/^-|-$/g, "") || "map"
  );
}

export default function MapEditorRoute({ loaderData }: Route.ComponentProps) {
  const { map, board, doc, viewing, versions, fromRun } = loaderData;
  const evidence = fromRun?.ok && !viewing ? fromRun.evidence : null;
  const { can } = useMember();
  const canEdit = can("edit:maps");
  const editsDraft = canEdit && !viewing;
  const [revision, setRevision] = useState(map.revision);
  const onRevision = useCallback((r: number) => setRevision(r), []);
  const editor = useRef<DraftReplaceHandle>(null);
  return (
    <>
      <p className="mb-2 text-sm">
        <Link className="link" to="/boards">
          Boards
        </Link>
        {board ? (
          <>
            {" / "}
            <Link className="link" to={`/boards/${board.id}`}>
              {board.maker} {board.model} ({board.boardNumber}
              {board.revision ? ` rev ${board.revision}` : ""})
            </Link>
          </>
        ) : null}
      </p>
      <div className="mb-4 flex flex-wrap items-end justify-between gap-3">
        <div>
          <h1 className="text-2xl font-semibold tracking-tight">{map.name}</h1>
          <p className="text-sm text-muted">
            {viewing
              ? `Published version ${viewing.number} · read only`
              : `Power-up map draft · ${versions.length ? `latest published version ${versions[0].number}` : "never published"}`}
          </p>
        </div>
        <a
          className="btn px-3 py-1"
          href={`/maps/${map.id}/export${viewing ? `?version=${viewing.number}` : ""}`}
          download
        >
          {viewing ? `Export v${viewing.number} JSON` : "Export draft JSON"}
        </a>
      </div>
      {viewing ? (
        <section
          className="card mb-4 flex flex-wrap items-center gap-3 border-l-4 border-l-info text-sm"
          aria-label="Published version"
        >
          <p className="flex-1">
            You are looking at version {viewing.number}, published{" "}
            {new Date(viewing.publishedAt).toLocaleDateString("en-CA")}: {viewing.note}. Published versions
            never change; PNG and SVG export this version's picture.
          </p>
          <Link className="btn px-3 py-1" to={`/maps/${map.id}`}>
            Back to the draft
          </Link>
        </section>
      ) : null}
      {fromRun && !fromRun.ok ? (
        <p role="alert" className="card mb-4 border-l-4 border-l-bad text-sm">
          {fromRun.message} The draft is shown without a run beside it.
        </p>
      ) : null}
      {evidence && canEdit ? <RunEvidencePanel evidence={evidence} /> : null}
      <MapEditor
        key={viewing ? `v${viewing.number}` : "draft"}
        mapId={map.id}
        doc={doc}
        revision={map.revision}
        canEdit={editsDraft}
        onRevision={onRevision}
        replaceHandle={editor}
        readOnlyNote={
          viewing
            ? `Published version ${viewing.number}: read only.${canEdit ? " Start a new draft from it to change it." : ""}`
            : undefined
        }
        pictureName={`${slug(map.name)}-${viewing ? `v${viewing.number}` : "draft"}`}
        toolbarExtra={
          editsDraft ? (s) => <PublishForm mapId={map.id} fromRun={evidence} {...s} /> : undefined
        }
      />
      <div className="mt-6 grid gap-6 lg:grid-cols-2">
        <Versions
          mapId={map.id}
          versions={versions}
          revision={revision}
          canEdit={editsDraft}
          viewing={viewing?.number ?? null}
          editor={editor}
        />
        {editsDraft ? <ImportPanel mapId={map.id} revision={revision} editor={editor} /> : null}
      </div>
    </>
  );
}

type ActionReply = { ok: boolean; message?: string; issues?: ValidationIssue[]; published?: number };

function PublishForm({
  mapId,
  revision,
  saved,
  errors,
  fromRun,
}: {
  mapId: string;
  revision: number;
  saved: boolean;
  errors: number;
  fromRun: RunEvidence | null;
}) {
  const fetcher = useFetcher<ActionReply>();
  const reason = errors
    ? "Fix the errors below before publishing."
    : !saved
      ? "Wait until every change is saved."
      : null;
  return (
    <fetcher.Form method="post" action={`/maps/${mapId}`} className="flex flex-wrap items-center gap-2">
      <input type="hidden" name="intent" value="publish" />
      <input type="hidden" name="revision" value={revision} />
      {fromRun ? <input type="hidden" name="fromRun" value={fromRun.runId} /> : null}
      <label htmlFor="publish-note" className="sr-only">
        Change note
      </label>
      <input
        id="publish-note"
        name="note"
        className="field-input w-64 py-1"
        placeholder="Change note, e.g. added the 5 V stage"
        defaultValue={
          fromRun
            ? `Extended after a no-fault run on ${fromRun.boardNumber} (v${fromRun.versionNumber})`
            : undefined
        }
        required
        maxLength={500}
      />
      <button
        type="submit"
        className="btn btn-primary px-3 py-1"
        disabled={!!reason || fetcher.state !== "idle"}
        title={reason ?? undefined}
      >
        Publish
      </button>
      {reason ? <span className="text-xs text-muted">{reason}</span> : null}
      {fetcher.data && fetcher.state === "idle" ? (
        <span
          role={fetcher.data.ok ? "status" : "alert"}
          className={`text-sm ${fetcher.data.ok ? "text-ok" : "text-bad"}`}
        >
          {fetcher.data.message}
        </span>
      ) : null}
    </fetcher.Form>
  );
}

const MODE_SHORT = { voltage: "V", resistance: "Ω to ground", diode: "diode" } as const;

/** The run a lead is extending the map from: what was measured and what the tech wrote. */
function RunEvidencePanel({ evidence }: { evidence: RunEvidence }) {
  return (
    <section className="card mb-4 border-l-4 border-l-info" aria-labelledby="from-run-title">
      <h2 id="from-run-title" className="font-semibold">
        Extending from a run on {evidence.boardNumber} (map v{evidence.versionNumber}, {evidence.techName})
      </h2>
      <p className="mt-1 text-sm">
        {evidence.noFaultFound
          ? "Every suspect in that version was cleared, so the fault lies outside what the map covers. These readings were all taken on the board; add the nets, parts or checks that would have caught it, then publish."
          : (evidence.findingMessage ?? "The run has no finding yet; its readings so far are below.")}
      </p>
      <div className="mt-3 grid gap-4 md:grid-cols-2">
        <div>
          <h3 className="text-sm font-medium">Readings ({evidence.readings.length})</h3>
          <ol className="mt-1 max-h-48 overflow-auto text-sm" data-testid="run-evidence">
            {evidence.readings.map((r) => (
              <li key={r.id} className="font-mono">
                #{r.seq} {r.netName} ({MODE_SHORT[r.mode]}): {r.valueText} · {r.verdict}
              </li>
            ))}
          </ol>
        </div>
        <div>
          <h3 className="text-sm font-medium">What the technician wrote</h3>
          {evidence.notes.length ? (
            <ul className="mt-1 text-sm">
              {evidence.notes.map((n) => (
                <li key={n.id}>
                  {n.kind === "help" ? "Asked for help" : "Note"} · {n.author}: {n.text}
                </li>
              ))}
            </ul>
          ) : (
            <p className="mt-1 text-sm text-muted">No notes on the run.</p>
          )}
          <Link className="link mt-2 inline-block text-sm" to={`/runs/${evidence.runId}`}>
            Open the run
          </Link>
        </div>
      </div>
    </section>
  );
}

function Versions({
  mapId,
  versions,
  revision,
  canEdit,
  viewing,
  editor,
}: {
  mapId: string;
  versions: Array<{ id: string; number: number; note: string; publishedAt: Date }>;
  revision: number;
  canEdit: boolean;
  viewing: number | null;
  editor: React.RefObject<DraftReplaceHandle | null>;
}) {
  const fetcher = useFetcher<ActionReply & { needsConfirm?: boolean }>();
  const [confirming, setConfirming] = useState<{ number: number; message: string } | null>(null);
  const [notice, setNotice] = useState<string | null>(null);
  const asked = useRef<number | null>(null);
  const start = (number: number, confirmed: boolean, waited = 0) => {
    const state = editor.current?.state() ?? { unsaved: 0, saving: false, revision };
    setNotice(null);
    // A save on its way would make this request's revision stale: let it land first.
    if (state.saving) {
      if (waited < 40) {
        setNotice("Saving your last change first…");
        setTimeout(() => start(number, confirmed, waited + 1), 250);
      } else setNotice("Your last change is still being saved; try again in a moment.");
      return;
    }
    if (!confirmed && state.unsaved) {
      setConfirming({
        number,
        message: `You have ${state.unsaved} unsaved change${state.unsaved === 1 ? "" : "s"} on the canvas. Starting again from version ${number} drops them.`,
      });
      return;
    }
    setConfirming(null);
    asked.current = number;
    editor.current?.begin();
    fetcher.submit(
      {
        intent: "draft-from-version",
        revision: String(state.revision),
        number: String(number),
        ...(confirmed ? { confirm: "1" } : {}),
      },
      { method: "post", action: `/maps/${mapId}` },
    );
  };
  // The server asks first when the draft holds unpublished changes; any refusal lets autosave carry on.
  // biome-ignore lint/correctness/useExhaustiveDependencies: react to a finished request only
  useEffect(() => {
    if (fetcher.state !== "idle" || !fetcher.data || fetcher.data.ok) return;
    editor.current?.end();
    if (fetcher.data.needsConfirm && asked.current !== null)
      setConfirming({ number: asked.current, message: fetcher.data.message ?? "" });
  }, [fetcher.state, fetcher.data]);
  return (
    <section className="card" aria-label="Versions">
      <h2 className="mb-3 font-semibold">Published versions</h2>
      {versions.length === 0 ? <p className="text-sm text-muted">Nothing published yet.</p> : null}
      <ul className="flex flex-col gap-2 text-sm">
        {versions.map((v) => (
          <li key={v.id} className="flex flex-wrap items-center gap-2 border-b border-line pb-2">
            <span className="font-mono font-semibold">v{v.number}</span>
            <span className="flex-1">{v.note}</span>
            <span className="text-muted">{new Date(v.publishedAt).toLocaleDateString("en-CA")}</span>
            {viewing === v.number ? (
              <span className="font-medium" aria-current="page">
                shown above
              </span>
            ) : (
              <Link className="link" to={`/maps/${mapId}?version=${v.number}`}>
                View<span className="sr-only"> version {v.number}</span>
              </Link>
            )}
            <a className="link" href={`/maps/${mapId}/export?version=${v.number}`} download>
              JSON
            </a>
            {canEdit ? (
              <button
                type="button"
                className="btn min-h-0 px-2 py-0.5 text-xs"
                disabled={fetcher.state !== "idle"}
                onClick={() => start(v.number, false)}
              >
                New draft from v{v.number}
              </button>
            ) : null}
          </li>
        ))}
      </ul>
      {confirming ? (
        <div role="alert" className="mt-3 rounded-md border border-warn bg-warn-soft p-3 text-sm">
          <p>{confirming.message}</p>
          <div className="mt-2 flex flex-wrap gap-2">
            <button
              type="button"
              className="btn btn-primary px-3 py-1"
              onClick={() => start(confirming.number, true)}
            >
              Replace the draft with v{confirming.number}
            </button>
            <button type="button" className="btn px-3 py-1" onClick={() => setConfirming(null)}>
              Keep the draft
            </button>
          </div>
        </div>
      ) : null}
      {notice ? (
        <p role="alert" className="mt-2 text-sm text-warn">
          {notice}
        </p>
      ) : null}
      {fetcher.data && fetcher.state === "idle" && !fetcher.data.needsConfirm && !confirming ? (
        <p
          role={fetcher.data.ok ? "status" : "alert"}
          className={`mt-2 text-sm ${fetcher.data.ok ? "text-ok" : "text-bad"}`}
        >
          {fetcher.data.message}
        </p>
      ) : null}
      {versions.length >= 1 ? (
        <form
          method="get"
          action={`/maps/${mapId}/compare`}
          className="mt-3 flex flex-wrap items-end gap-2 text-sm"
        >
          <label className="flex flex-col gap-1">
            From
            <select
              name="a"
              className="field-input py-1"
              defaultValue={versions[1]?.number ?? versions[0].number}
            >
              {versions.map((v) => (
                <option key={v.id} value={v.number}>
                  v{v.number}
                </option>
              ))}
            </select>
          </label>
          <label className="flex flex-col gap-1">
            To
            <select name="b" className="field-input py-1" defaultValue="draft">
              <option value="draft">current draft</option>
              {versions.map((v) => (
                <option key={v.id} value={v.number}>
                  v{v.number}
                </option>
              ))}
            </select>
          </label>
          <button type="submit" className="btn px-3 py-1">
            Compare
          </button>
        </form>
      ) : null}
    </section>
  );
}

type Preview =
  | { ok: true; json: string; nodes: number; edges: number; warnings: number; board?: string }
  | { ok: false; message: string; issues?: ValidationIssue[] };

function ImportPanel({
  mapId,
  revision,
  editor,
}: {
  mapId: string;
  revision: number;
  editor: React.RefObject<DraftReplaceHandle | null>;
}) {
  const fetcher = useFetcher<ActionReply>();
  // A refused import leaves the draft as it was, so autosave carries on.
  // biome-ignore lint/correctness/useExhaustiveDependencies: react to a finished request only
  useEffect(() => {
    if (fetcher.state === "idle" && fetcher.data && !fetcher.data.ok) editor.current?.end();
  }, [fetcher.state, fetcher.data]);
  const [preview, setPreview] = useState<Preview | null>(null);
  const onFile = async (file: File | undefined) => {
    if (!file) return setPreview(null);
    if (file.size > MAX_IMPORT_BYTES)
      return setPreview({
        ok: false,
        message: `The file is ${Math.round(file.size / 1000)} kB; at most 2 MB can be imported.`,
      });
    const json = await file.text();
    const doc = mapFromJson(json);
    if (!doc.ok) return setPreview({ ok: false, message: doc.error.message });
    const report = validateMap(doc.value);
    if (!report.ok) return setPreview({ ok: false, message: report.error.message });
    const errors = report.value.issues.filter((i) => i.severity === "error");
    if (errors.length)
      return setPreview({
        ok: false,
        message: `The map in this file has ${errors.length} error${errors.length === 1 ? "" : "s"}:`,
        issues: errors,
      });
    const b = doc.value.board;
    setPreview({
      ok: true,
      json,
      nodes: doc.value.nodes.length,
      edges: doc.value.edges.length,
      warnings: report.value.issues.length,
      board: b ? [b.maker, b.model, b.boardNumber].filter(Boolean).join(" ") : undefined,
    });
  };
  return (
    <section className="card" aria-label="Import">
      <h2 className="mb-1 font-semibold">Import a map file</h2>
      <p className="mb-3 text-sm text-muted">
        A Railwise map JSON file (at most 2 MB). It is checked and previewed first; the draft changes only
        when you confirm.
      </p>
      <label htmlFor="import-file" className="text-sm font-medium">
        Map file
      </label>
      <input
        id="import-file"
        type="file"
        accept="application/json,.json"
        className="mb-2 block text-sm"
        onChange={(e) => onFile(e.target.files?.[0])}
      />
      {preview && !preview.ok ? (
        <div role="alert" className="rounded-md border border-bad bg-bad-soft p-3 text-sm">
          <p className="font-medium text-bad">Refused: {preview.message}</p>
          {preview.issues ? (
            <ul className="mt-1 list-disc pl-5">
              {preview.issues.slice(0, 10).map((i, k) => (
                <li key={`${i.code}-${k}`}>{i.message}</li>
              ))}
            </ul>
          ) : null}
          <p className="mt-1">Nothing was changed.</p>
        </div>
      ) : null}
      {preview?.ok ? (
        <fetcher.Form
          method="post"
          action={`/maps/${mapId}`}
          encType="multipart/form-data"
          onSubmit={() => editor.current?.begin()}
          className="flex flex-col gap-2 rounded-md border border-line p-3 text-sm"
        >
          <p data-testid="import-preview">
            {preview.nodes} nodes, {preview.edges} links{preview.board ? ` for ${preview.board}` : ""}; no
            errors
            {preview.warnings ? `, ${preview.warnings} warnings` : ""}. Importing replaces the current draft
            (published versions stay).
          </p>
          <input type="hidden" name="intent" value="import" />
          <input type="hidden" name="revision" value={revision} />
          <input type="hidden" name="json" value={preview.json} />
          <button type="submit" className="btn btn-primary self-start px-3 py-1">
            Replace the draft with this map
          </button>
        </fetcher.Form>
      ) : null}
      {fetcher.data && fetcher.state === "idle" ? (
        <p
          role={fetcher.data.ok ? "status" : "alert"}
          className={`mt-2 text-sm ${fetcher.data.ok ? "text-ok" : "text-bad"}`}
        >
          {fetcher.data.message}
        </p>
      ) : null}
    </section>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [
  { title: data ? `${data.map.name} · Railwise` : "Map · Railwise" },
];

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  const status = (error as { status?: number })?.status;
  const message =
    typeof (error as { data?: unknown })?.data === "string" ? (error as { data: string }).data : null;
  return (
    <div className="card">
      <h1 className="text-xl font-semibold">
        {status === 403 ? "Not allowed" : status === 404 ? "Map not found" : "The map could not be shown"}
      </h1>
      <p className="mt-2 text-muted">{message ?? "Something went wrong while opening this map."}</p>
      <Link className="link mt-3 inline-block" to="/boards">
        Back to boards
      </Link>
    </div>
  );
}
