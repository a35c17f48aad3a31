import { getFormProps, getSelectProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { and, eq } from "drizzle-orm";
import { data, Form, Link, redirect, useNavigation } from "react-router";
import { z } from "zod";
import { FieldErrors } from "~/components/field";
import { PageHeader } from "~/components/page-header";
import { CONDITION_LABELS, CONDITIONS, STRATEGY_LABELS } from "~/lib/walker";
import { requireMember } from "~/server/auth.server";
import { db } from "~/server/db.server";
import {
  createRun,
  findJob,
  getVersionDoc,
  listBoards,
  listPublishedVersions,
  RunError,
  searchBoards,
} from "~/server/runs.server";
import { boards } from "~/server/schema.server";
import type { Route } from "./+types/runs-new";

export async function loader({ request }: Route.LoaderArgs) {
  const { shop } = await requireMember(request, { permission: "run:diagnosis" });
  const url = new URL(request.url);
  const q = (url.searchParams.get("q") ?? "").trim().slice(0, 60);
  const jobParam = (url.searchParams.get("jobId") ?? "").trim().slice(0, 64);
  let boardId = url.searchParams.get("boardId") ?? "";
  let job: { id: string; number: number } | null = null;
  let jobMessage: string | null = null;
  if (jobParam) {
    const found = await findJob(shop.id, jobParam);
    if (!found) jobMessage = `No job "${jobParam}" in this shop.`;
    else if (!found.boardId) jobMessage = `Job #${found.number} has no board yet; pick the board below.`;
    else boardId = found.boardId;
    if (found) job = { id: found.id, number: found.number };
  }
  const board = boardId
    ? await db
        .select()
        .from(boards)
        .where(and(eq(boards.id, boardId), eq(boards.shopId, shop.id)))
        .get()
    : undefined;
  const candidates = q ? await searchBoards(shop.id, q) : board ? [] : await listBoards(shop.id);
  const versions = board ? await listPublishedVersions(shop.id, board.id) : [];
  const latest = versions[0];
  const doc = latest ? await getVersionDoc(shop.id, latest.id) : null;
  const sources = doc
    ? doc.nodes
        .filter((n) => n.kind === "source")
        .map((n) => ({
          id: n.id,
          name: n.name,
          kind: n.kind === "source" ? (n.sourceKind ?? "other") : "other",
        }))
    : [];
  return {
    q,
    job,
    jobMessage,
    board: board
      ? {
          id: board.id,
          label: `${board.maker} ${board.model}`,
          boardNumber: board.boardNumber,
          revision: board.revision,
        }
      : null,
    candidates: candidates.map((b) => ({
      id: b.id,
      label: `${b.maker} ${b.model}`,
      boardNumber: b.boardNumber,
      revision: b.revision,
    })),
    versions: versions.map((v) => ({ id: v.id, label: `${v.mapName} · v${v.number}`, number: v.number })),
    mapStrategy: doc?.settings.strategy ?? null,
    hasButton: sources.some((s) => s.kind === "button"),
  };
}

const NewRunSchema = z.object({
  boardId: z.string({ error: "Pick a board." }).min(1).max(64),
  jobId: z.string().max(64).optional(),
  mapVersionId: z.string({ error: "Pick a published map version." }).min(1).max(64),
  strategy: z.enum(["order", "split", "best"]).optional(),
  condition: z.enum(CONDITIONS, { error: "Say which power sources are attached." }),
  pressButton: z.enum(["on"]).optional(),
});

export async function action({ request }: Route.ActionArgs) {
  const { shop, user } = await requireMember(request, { permission: "run:diagnosis" });
  const submission = parseWithZod(await request.formData(), { schema: NewRunSchema });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  const v = submission.value;
  try {
    const runId = await createRun({
      shopId: shop.id,
      techId: user.id,
      boardId: v.boardId,
      mapVersionId: v.mapVersionId,
      jobId: v.jobId || null,
      strategy: v.strategy ?? null,
      condition: v.condition,
      pressButton: v.pressButton === "on",
    });
    return redirect(`/runs/${runId}`);
  } catch (e) {
    if (e instanceof RunError)
      return data({ result: submission.reply({ formErrors: [e.message] }) }, { status: e.status });
    throw e;
  }
}

export default function RunsNewRoute({ loaderData, actionData }: Route.ComponentProps) {
  const { board, candidates, versions, mapStrategy, job, jobMessage, q, hasButton } = loaderData;
  const navigation = useNavigation();
  const [form, fields] = useForm({
    lastResult: actionData?.result,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: NewRunSchema }),
    shouldValidate: "onSubmit",
    defaultValue: { condition: "both", pressButton: "on" },
  });
  return (
    <>
      <PageHeader
        title="Start a run"
        subtitle="Pick the board, the map version and how the board is powered."
      />
      {jobMessage ? (
        <p role="alert" className="card mb-4 border-l-4 border-l-warn bg-warn-soft">
          {jobMessage}
        </p>
      ) : null}
      <div className="grid gap-6 md:grid-cols-2">
        <section className="card flex flex-col gap-3" aria-labelledby="find-title">
          <h2 id="find-title" className="font-semibold">
            Board
          </h2>
          {board ? (
            <p>
              <span className="font-medium">{board.label}</span> · {board.boardNumber}
              {board.revision ? ` rev ${board.revision}` : ""} {job ? `· job #${job.number}` : ""}{" "}
              <Link className="link text-sm" to="/runs/new">
                change
              </Link>
            </p>
          ) : null}
          <Form method="get" className="flex flex-wrap items-end gap-2">
            <div className="flex flex-col gap-1">
              <label htmlFor="board-q" className="text-sm font-medium">
                Search by board number
              </label>
              <input id="board-q" name="q" defaultValue={q} className="field-input" placeholder="OM-5150" />
            </div>
            <button type="submit" className="btn">
              Search
            </button>
          </Form>
          <Form method="get" className="flex flex-wrap items-end gap-2">
            <div className="flex flex-col gap-1">
              <label htmlFor="job-q" className="text-sm font-medium">
                Or a job number
              </label>
              <input id="job-q" name="jobId" className="field-input" inputMode="numeric" />
            </div>
            <button type="submit" className="btn">
              Use job
            </button>
          </Form>
          {candidates.length ? (
            <ul className="flex flex-col gap-1">
              {candidates.map((b) => (
                <li key={b.id}>
                  <Link
                    className="btn w-full justify-start"
                    to={`/runs/new?boardId=${b.id}${job ? `&jobId=${job.id}` : ""}`}
                  >
                    {b.boardNumber} · {b.label}
                    {b.revision ? ` rev ${b.revision}` : ""}
                  </Link>
                </li>
              ))}
            </ul>
          ) : q ? (
            <p className="text-sm text-muted">No board matches “{q}”.</p>
          ) : null}
        </section>
        {board ? (
          <Form method="post" {...getFormProps(form)} className="card flex flex-col gap-4">
            <h2 className="font-semibold">Run setup</h2>
            <FieldErrors id={form.errorId} errors={form.errors} />
            <input type="hidden" name="boardId" value={board.id} />
            {job ? <input type="hidden" name="jobId" value={job.id} /> : null}
            {versions.length ? (
              <>
                <div className="flex flex-col gap-1">
                  <label htmlFor={fields.mapVersionId.id} className="text-sm font-medium">
                    Published map version
                  </label>
                  <select
                    {...getSelectProps(fields.mapVersionId)}
                    defaultValue={versions[0].id}
                    className="field-input"
                  >
                    {versions.map((v, i) => (
                      <option key={v.id} value={v.id}>
                        {v.label}
                        {i === 0 ? " (latest)" : ""}
                      </option>
                    ))}
                  </select>
                  <FieldErrors id={fields.mapVersionId.errorId} errors={fields.mapVersionId.errors} />
                </div>
                <div className="flex flex-col gap-1">
                  <label htmlFor={fields.strategy.id} className="text-sm font-medium">
                    Next-reading strategy
                  </label>
                  <select
                    id={fields.strategy.id}
                    name={fields.strategy.name}
                    defaultValue=""
                    className="field-input"
                  >
                    <option value="">
                      Map's choice{mapStrategy ? `: ${STRATEGY_LABELS[mapStrategy]}` : ""}
                    </option>
                    {(["order", "split", "best"] as const).map((s) => (
                      <option key={s} value={s}>
                        {STRATEGY_LABELS[s]}
                      </option>
                    ))}
                  </select>
                </div>
                <fieldset className="flex flex-col gap-2" aria-describedby={fields.condition.errorId}>
                  <legend className="text-sm font-medium">Board condition: what is attached</legend>
                  {CONDITIONS.map((c) => (
                    <label
                      key={c}
                      className="flex min-h-12 items-center gap-3 rounded-md border border-line px-3"
                    >
                      <input
                        type="radio"
                        name={fields.condition.name}
                        value={c}
                        defaultChecked={c === "both"}
                        className="h-5 w-5"
                      />
                      {CONDITION_LABELS[c]}
                    </label>
                  ))}
                  <FieldErrors id={fields.condition.errorId} errors={fields.condition.errors} />
                </fieldset>
                {hasButton ? (
                  <label className="flex min-h-12 items-center gap-3">
                    <input
                      type="checkbox"
                      name={fields.pressButton.name}
                      value="on"
                      defaultChecked
                      className="h-5 w-5"
                    />
                    The power button is pressed during the check
                  </label>
                ) : null}
                <p className="rounded-md bg-warn-soft p-3 text-sm">
                  Never probe the mains side of the adapter. Disconnect the battery before any rework or
                  unpowered reading.
                </p>
                <button
                  type="submit"
                  className="btn btn-primary min-h-12"
                  disabled={navigation.state !== "idle"}
                >
                  Start the run
                </button>
              </>
            ) : (
              <p className="text-muted">
                This board has no published map yet. A lead publishes one from the map editor.
              </p>
            )}
          </Form>
        ) : null}
      </div>
    </>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Start a run · Railwise" }];
