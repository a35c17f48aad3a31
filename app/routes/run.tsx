import { parseWithZod } from "@conform-to/zod/v4";
import { useCallback, useEffect, useRef, useState } from "react";
import {
  data,
  isRouteErrorResponse,
  Link,
  type ShouldRevalidateFunctionArgs,
  useFetcher,
  useNavigation,
  useRevalidator,
} from "react-router";
import { z } from "zod";
import { CautionList } from "~/components/caution-list";
import { endRunOnlyRevalidation, revalidateRunOnly } from "~/components/run-revalidation";
import { can } from "~/lib/permissions";
import {
  type Caution,
  CONDITION_LABELS,
  cautionsFor,
  LEARNED_FROM_COUNTS,
  learnedFromText,
  MODE_LABELS,
  OUTCOME_LABELS,
  parseRefdesList,
  powerClass,
  STAGES_IN_ORDER,
  STRATEGY_LABELS,
  VERDICT_TONE,
} from "~/lib/walker";
import { forbidden, notFound, requireMember } from "~/server/auth.server";
import { appUrl, sendEmail } from "~/server/email.server";
import {
  addRunNote,
  escalateRun,
  getRunView,
  markNoticesRead,
  type RunView,
  RunError,
  recordOutcome,
  saveReading,
} from "~/server/runs.server";
import { type CheckedPhoto, checkPhoto, readFormWithPhoto } from "~/server/photos.server";
import { redirectWithToast } from "~/server/toast.server";
import type { Route } from "./+types/run";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { shop, user, role } = await requireMember(request, { permission: "view:runs" });
  const view = await getRunView(shop.id, params.runId);
  if (!view) notFound("That run");
  if (can(role, "help:runs") || view.run.techId === user.id)
    await markNoticesRead(shop.id, user.id, view.run.id);
  return {
    view,
    canWrite: can(role, "run:diagnosis"),
    canHelp: can(role, "help:runs"),
    canExtendMap: can(role, "edit:maps"),
    conditionLabel: CONDITION_LABELS[view.run.condition],
  };
}

const ClientIdSchema = z.string().regex(/^[A-Za-z0-9_-]{8,64}$/, "A reading needs a client id.");
const ModeSchema = z.enum(["voltage", "resistance", "diode"]);

const ActionSchema = z.discriminatedUnion("intent", [
  z.object({
    intent: z.literal("reading"),
    id: ClientIdSchema,
    netId: z.string().min(1).max(64),
    mode: ModeSchema,
    text: z.string({ error: "Type the reading, e.g. 3.3, 450mV or OL." }).trim().min(1).max(64),
    expectedSeq: z.coerce.number().int().min(1),
    replacesId: z.string().max(64).optional(),
    leadStepId: z.string().max(64).optional(),
  }),
  z.object({
    intent: z.literal("skip"),
    id: ClientIdSchema,
    netId: z.string().min(1).max(64),
    mode: ModeSchema,
    expectedSeq: z.coerce.number().int().min(1),
    leadStepId: z.string().max(64).optional(),
    note: z.string().max(500).optional(),
  }),
  z.object({
    intent: z.literal("note"),
    text: z.string({ error: "Write the note first." }).trim().min(1).max(2000),
  }),
  z.object({
    intent: z.literal("help"),
    text: z.string({ error: "Say what you are stuck on." }).trim().min(1).max(2000),
  }),
  z.object({
    intent: z.literal("lead-note"),
    text: z.string({ error: "Write the note first." }).trim().min(1).max(2000),
  }),
  z.object({
    intent: z.literal("lead-step"),
    netId: z.string({ error: "Pick a net." }).min(1).max(64),
    mode: ModeSchema,
    text: z.string({ error: "Say why this check helps." }).trim().min(1).max(500),
  }),
  z.object({
    intent: z.literal("outcome"),
    round: z.coerce.number().int().min(1),
    fixId: z.string().max(64).optional(),
    partsUsed: z.string().max(400).optional(),
    outcome: z.enum(["powers-on", "still-dead", "new-symptom"], { error: "Pick the outcome after re-test." }),
  }),
]);

type ActionResult =
  | {
      ok: true;
      intent: string;
      replay?: boolean;
      reading?: { id: string; verdict: string; valueText: string };
      /** After a reading or a skip: the run as it now stands, so the walker needs no second request. */
      view?: RunView;
    }
  | {
      ok: false;
      intent?: string;
      status: number;
      message: string;
      fieldErrors?: Record<string, string[]>;
      offline?: boolean;
    };

export async function action({ request, params }: Route.ActionArgs) {
  // The member check reads only the session cookie, so the body (possibly a photo) is read after it.
  const { shop, user, role } = await requireMember(request);
  const read = await readFormWithPhoto(request, "photo");
  if (!read.ok)
    return data<ActionResult>(
      {
        ok: false,
        intent: "note",
        status: read.status,
        message: read.message,
        fieldErrors: { photo: [read.message] },
      },
      { status: read.status },
    );
  const formData = read.formData;
  const intent = String(formData.get("intent") ?? "");
  const lead = intent === "lead-note" || intent === "lead-step";
  if (!can(role, lead ? "help:runs" : "run:diagnosis")) forbidden();
  const submission = parseWithZod(formData, { schema: ActionSchema });
  if (submission.status !== "success") {
    const fieldErrors = (submission.error ?? {}) as Record<string, string[]>;
    const first = Object.values(fieldErrors).flat()[0];
    return data<ActionResult>(
      { ok: false, intent, status: 400, message: first ?? "That was not understood.", fieldErrors },
      { status: 400 },
    );
  }
  const v = submission.value;
  try {
    switch (v.intent) {
      case "reading":
      case "skip": {
        const answer = await saveReading({
          shopId: shop.id,
          userId: user.id,
          runId: params.runId,
          id: v.id,
          netId: v.netId,
          mode: v.mode,
          text: v.intent === "reading" ? v.text : "",
          expectedSeq: v.expectedSeq,
          replacesId: v.intent === "reading" ? (v.replacesId ?? null) : null,
          leadStepId: v.leadStepId ?? null,
          skip: v.intent === "skip",
          note: v.intent === "skip" ? (v.note ?? "Can't reach the probe point") : null,
        });
        const view = await getRunView(shop.id, params.runId, answer.loaded);
        return data<ActionResult>({
          ok: true,
          intent: v.intent,
          replay: answer.replay,
          reading: answer.reading,
          ...(view ? { view } : {}),
        });
      }
      case "note":
      case "lead-note":
      case "lead-step": {
        const file = v.intent === "note" ? formData.get("photo") : null;
        let photo: CheckedPhoto | null = null;
        if (file instanceof File && file.size > 0) {
          const checked = await checkPhoto(file);
          if (!checked.ok) {
            const message = `${checked.message} Nothing was saved.`;
            return data<ActionResult>(
              { ok: false, intent: v.intent, status: 415, message, fieldErrors: { photo: [message] } },
              { status: 415 },
            );
          }
          photo = checked;
        }
        await addRunNote({
          shopId: shop.id,
          userId: user.id,
          runId: params.runId,
          kind: v.intent,
          text: v.text,
          netId: v.intent === "lead-step" ? v.netId : null,
          mode: v.intent === "lead-step" ? v.mode : null,
          photo,
        });
        return data<ActionResult>({ ok: true, intent: v.intent });
      }
      case "help": {
        const sent = await escalateRun({
          shopId: shop.id,
          userId: user.id,
          runId: params.runId,
          text: v.text,
          runUrl: appUrl(request, `/runs/${params.runId}`),
          send: sendEmail,
        });
        return redirectWithToast(`/runs/${params.runId}`, {
          kind: "success",
          message: sent
            ? `Asked ${sent} lead${sent === 1 ? "" : "s"} for help. Their notes appear here.`
            : "Help request noted; no lead in this shop to notify.",
        });
      }
      case "outcome": {
        const parts = parseRefdesList(v.partsUsed ?? "");
        if (!parts.ok)
          return data<ActionResult>(
            {
              ok: false,
              intent: "outcome",
              status: 400,
              message: parts.message,
              fieldErrors: { partsUsed: [parts.message] },
            },
            { status: 400 },
          );
        await recordOutcome({
          shopId: shop.id,
          userId: user.id,
          runId: params.runId,
          round: v.round,
          fixId: v.fixId || null,
          partsUsed: parts.value,
          outcome: v.outcome,
        });
        if (v.outcome === "still-dead")
          return redirectWithToast(`/runs/${params.runId}`, {
            kind: "info",
            message:
              "Recorded. The run continues from the board as it is now: earlier readings stay in the history.",
          });
        return redirectWithToast(`/runs/${params.runId}/report`, {
          kind: "success",
          message: "Fix and outcome recorded.",
        });
      }
    }
  } catch (e) {
    if (e instanceof RunError) {
      if (e.status === 404) notFound("That run");
      return data<ActionResult>(
        { ok: false, intent: v.intent, status: e.status, message: e.message },
        { status: e.status },
      );
    }
    throw e;
  }
}

// With JavaScript on, a failed connection becomes an "unsaved" answer the walker retries, never an error page.
export async function clientAction({ serverAction }: Route.ClientActionArgs): Promise<ActionResult> {
  try {
    return (await serverAction()) as ActionResult;
  } catch (e) {
    if (isRouteErrorResponse(e))
      return { ok: false, status: e.status, message: typeof e.data === "string" ? e.data : e.statusText };
    if (e instanceof Response) throw e;
    return { ok: false, status: 0, offline: true, message: "Not saved yet: the server cannot be reached." };
  }
}

export function shouldRevalidate({ actionResult, defaultShouldRevalidate }: ShouldRevalidateFunctionArgs) {
  const r = actionResult as ActionResult | undefined;
  if (r && !r.ok && (r.offline || r.status === 400 || r.status === 403)) return false;
  return defaultShouldRevalidate;
}

type Pending = { fields: Record<string, string>; state: "sending" | "unsaved"; label: string };
const pendingKey = (runId: string) => `railwise:pending:${runId}`;

function clientId() {
  const b = new Uint8Array(16);
  crypto.getRandomValues(b);
  return Array.from(b, (x) => x.toString(16).padStart(2, "0")).join("");
}

export default function RunRoute({ loaderData }: Route.ComponentProps) {
  const { canWrite, canHelp, canExtendMap, conditionLabel } = loaderData;
  const fetcher = useFetcher<ActionResult>({ key: `reading-${loaderData.view.run.id}` });
  // A saved reading answers with the run as it now stands; it shows until the loader has caught up with it
  // (the regular poll), since every reading moves the run's next sequence number on.
  const answered = fetcher.data?.ok ? fetcher.data.view : undefined;
  const view =
    answered && answered.run.id === loaderData.view.run.id && answered.nextSeq > loaderData.view.nextSeq
      ? answered
      : loaderData.view;
  const revalidator = useRevalidator();
  const navigation = useNavigation();
  const [pending, setPending] = useState<Pending | null>(null);
  const [message, setMessage] = useState<{ tone: "bad" | "warn"; text: string } | null>(null);
  const [correcting, setCorrecting] = useState<RunView["readings"][number] | null>(null);
  const sentRef = useRef<string | null>(null);
  // After a save (or a conflict) the screen is stale until data with a later step arrives; input stays locked.
  const [staleSeq, setStaleSeq] = useState<number | null>(null);
  const tries = useRef(0);
  const refreshing = staleSeq !== null;

  const send = useCallback(
    (p: Pending) => {
      sentRef.current = p.fields.id;
      // No automatic revalidation: offline it would fail the whole page; the answer effect revalidates.
      fetcher.submit(p.fields, { method: "post", defaultShouldRevalidate: false });
    },
    [fetcher],
  );

  const store = useCallback(
    (p: Pending | null) => {
      setPending(p);
      try {
        if (p) localStorage.setItem(pendingKey(view.run.id), JSON.stringify(p));
        else localStorage.removeItem(pendingKey(view.run.id));
      } catch {
        // Private mode without storage: the reading is still held in memory and retried.
      }
    },
    [view.run.id],
  );

  // Reopened tab: a reading that never reached the server is sent again under the same id (once per run).
  // biome-ignore lint/correctness/useExhaustiveDependencies: runs once per mounted run, not on every revalidation
  useEffect(() => {
    let saved: Pending | null = null;
    try {
      saved = JSON.parse(localStorage.getItem(pendingKey(view.run.id)) ?? "null");
    } catch {
      saved = null;
    }
    if (!saved) return;
    if (view.readings.some((r) => r.id === saved.fields.id)) store(null);
    else {
      const again = { ...saved, state: "sending" as const };
      store(again);
      send(again);
    }
  }, [view.run.id]);

  // Answers of the reading fetcher.
  useEffect(() => {
    if (fetcher.state !== "idle" || !fetcher.data || !pending || sentRef.current !== pending.fields.id)
      return;
    const r = fetcher.data;
    sentRef.current = null;
    if (r.ok) {
      store(null);
      setMessage(null);
      setCorrecting(null);
      tries.current = 0;
      // The answer carries the fresh run; only an answer without it (none today) needs the loader again.
      setStaleSeq(r.view ? null : view.nextSeq);
    } else if (r.offline) {
      store({ ...pending, state: "unsaved" });
    } else {
      store(null);
      setMessage({ tone: r.status === 409 ? "warn" : "bad", text: r.message });
      if (r.status === 409) {
        tries.current = 0;
        setStaleSeq(view.nextSeq);
      }
    }
  }, [fetcher.state, fetcher.data, pending, store, view.nextSeq]);

  // Fetch the fresh step; a revalidation already under way (the poll) may predate the save, so go again.
  useEffect(() => {
    if (staleSeq === null) return;
    if (view.nextSeq > staleSeq || tries.current >= 5) {
      setStaleSeq(null);
      return;
    }
    if (revalidator.state === "idle") {
      tries.current += 1;
      revalidateRunOnly(revalidator.revalidate);
    }
  }, [staleSeq, view.nextSeq, revalidator]);
  useEffect(() => {
    if (revalidator.state === "idle") endRunOnlyRevalidation();
  }, [revalidator.state]);

  // Retry unsaved readings when the connection comes back, and every few seconds meanwhile.
  useEffect(() => {
    if (pending?.state !== "unsaved") return;
    const retry = () => {
      if (fetcher.state === "idle") {
        const again = { ...pending, state: "sending" as const };
        store(again);
        send(again);
      }
    };
    window.addEventListener("online", retry);
    const t = window.setInterval(retry, 4000);
    return () => {
      window.removeEventListener("online", retry);
      window.clearInterval(t);
    };
  }, [pending, fetcher.state, send, store]);

  // A lead's note or extra check reaches this screen without a reload.
  useEffect(() => {
    const t = window.setInterval(() => {
      if (
        navigator.onLine &&
        document.visibilityState === "visible" &&
        revalidator.state === "idle" &&
        fetcher.state === "idle" &&
        navigation.state === "idle" &&
        !pending &&
        staleSeq === null
      )
        revalidator.revalidate();
    }, 4000);
    return () => window.clearInterval(t);
  }, [revalidator, fetcher.state, navigation.state, pending, staleSeq]);

  const submitReading = (fields: Record<string, string>, label: string) => {
    setMessage(null);
    const p: Pending = {
      fields: { ...fields, id: clientId(), expectedSeq: String(view.nextSeq) },
      state: "sending",
      label,
    };
    store(p);
    send(p);
  };

  const step = correcting
    ? {
        ...(view.step ?? {}),
        netId: correcting.netId,
        netName: correcting.netName,
        mode: correcting.mode,
        why: `Correcting reading ${correcting.seq} (${correcting.valueText}). The first value stays in the history.`,
        probeText: "",
        expectedText: correcting.windowText,
        unit: correcting.mode === "resistance" ? "Ω" : "V",
        leadStepId: null,
        replacesId: correcting.id,
        photo: null,
        needsDisassembly: false,
        probeSeconds: 0,
        skippedBefore: false,
        notes: null,
        safetyNotes: null,
      }
    : view.step;
  const current = view.readings.filter((r) => r.round === view.run.round);
  const closed = view.run.status === "closed";

  return (
    <div className="flex flex-col gap-4">
      <header className="flex flex-wrap items-baseline justify-between gap-2">
        <div>
          <p className="text-sm">
            <Link className="link" to="/runs">
              Runs
            </Link>
          </p>
          <h1 className="text-2xl font-semibold tracking-tight">
            {view.board?.label} <span className="text-muted">· {view.board?.boardNumber}</span>
          </h1>
          <p className="text-sm text-muted">
            Map “{view.version.mapName}” v{view.version.number} · {STRATEGY_LABELS[view.run.strategy]} ·{" "}
            {conditionLabel}
            {view.job ? ` · job #${view.job.number}` : ""} · {view.run.techName}
            {view.run.round > 1 ? ` · round ${view.run.round}` : ""}
          </p>
        </div>
        <Link className="btn" to={`/runs/${view.run.id}/report`}>
          Repair report
        </Link>
      </header>

      <StageStrip stages={view.stages} />

      {message ? (
        <div
          role="alert"
          className={`card border-l-4 ${message.tone === "bad" ? "border-l-bad bg-bad-soft" : "border-l-warn bg-warn-soft"}`}
        >
          {message.text}
        </div>
      ) : null}

      {pending ? (
        <output
          className={`card block border-l-4 ${pending.state === "unsaved" ? "border-l-warn bg-warn-soft" : "border-l-info bg-info-soft"}`}
        >
          {pending.state === "unsaved"
            ? `Not saved yet: ${pending.label}. It is kept on this device and sent again when the connection is back.`
            : `Saving ${pending.label}…`}
        </output>
      ) : null}

      <div className="grid gap-4 lg:grid-cols-[minmax(0,3fr)_minmax(0,2fr)]">
        <div className="flex flex-col gap-4">
          <LastVerdict reading={view.lastReading} />
          {view.contradictions.length ? <Contradictions items={view.contradictions} /> : null}
          {closed ? (
            <div className="card">
              <h2 className="text-lg font-semibold">This run is closed</h2>
              <p className="text-muted">
                Outcome: {view.run.outcome ? OUTCOME_LABELS[view.run.outcome] : "—"}.{" "}
                <Link className="link" to={`/runs/${view.run.id}/report`}>
                  Open the repair report
                </Link>
              </p>
            </div>
          ) : step && (!view.isolated || step.leadStepId) ? (
            <CheckCard
              key={`${step.netId}:${step.mode}:${view.nextSeq}:${step.replacesId ?? ""}`}
              step={step}
              seq={view.nextSeq}
              previousMode={current.filter((r) => !r.skipped).at(-1)?.mode ?? null}
              conditionLabel={conditionLabel}
              canWrite={canWrite}
              busy={!!pending || refreshing}
              onReading={(text) =>
                submitReading(
                  {
                    intent: "reading",
                    netId: step.netId,
                    mode: step.mode,
                    text,
                    ...(step.replacesId ? { replacesId: step.replacesId } : {}),
                    ...(step.leadStepId ? { leadStepId: step.leadStepId } : {}),
                  },
                  `${text} on ${step.netName}`,
                )
              }
              onSkip={() =>
                submitReading(
                  {
                    intent: "skip",
                    netId: step.netId,
                    mode: step.mode,
                    ...(step.leadStepId ? { leadStepId: step.leadStepId } : {}),
                  },
                  `skip of ${step.netName}`,
                )
              }
              onCancelCorrection={correcting ? () => setCorrecting(null) : undefined}
            />
          ) : view.finding ? (
            <FindingCard
              key={`${view.finding.nodeId ?? "none"}:${view.run.round}`}
              view={view}
              canWrite={canWrite}
              canExtendMap={canExtendMap}
            />
          ) : (
            <div className="card">
              <h2 className="text-lg font-semibold">No further check</h2>
              <p className="text-muted">
                The map has no reading left that separates the remaining suspects. Ask a lead for help below.
              </p>
            </div>
          )}
          <Notes view={view} canWrite={canWrite} canHelp={canHelp} />
        </div>
        <aside className="flex flex-col gap-4">
          <Suspects view={view} />
          <MapView nets={view.nets} />
          <History
            readings={view.readings}
            round={view.run.round}
            canCorrect={canWrite && !closed}
            onCorrect={setCorrecting}
          />
        </aside>
      </div>
    </div>
  );
}

function StageStrip({ stages }: { stages: RunView["stages"] }) {
  const tone = {
    ok: "bg-ok-soft border-ok",
    fault: "bg-bad-soft border-bad",
    open: "bg-panel border-line",
    off: "bg-sunken border-line",
  };
  const label = { ok: "all present", fault: "missing found", open: "to check", off: "not powered" };
  return (
    <nav aria-label="Power-up stages">
      <ol className="flex flex-wrap gap-2">
        {stages.map((s) => (
          <li key={s.stage} className={`flex-1 rounded-md border px-3 py-2 text-sm ${tone[s.state]}`}>
            <span className="font-semibold">{s.stage}</span>{" "}
            <span className="text-muted">{label[s.state]}</span>
            <span className="block text-xs text-muted">
              {s.present} present · {s.missing} missing · {s.nets} nets
            </span>
          </li>
        ))}
      </ol>
    </nav>
  );
}

function LastVerdict({ reading }: { reading: RunView["lastReading"] }) {
  if (!reading) return null;
  const tone = VERDICT_TONE[reading.verdict] ?? "info";
  const cls = {
    ok: "border-l-ok bg-ok-soft",
    warn: "border-l-warn bg-warn-soft",
    bad: "border-l-bad bg-bad-soft",
    info: "border-l-info bg-info-soft",
  }[tone];
  return (
    <output aria-live="polite" className={`card block border-l-4 ${cls}`} data-testid="last-verdict">
      <span className="text-sm text-muted">
        Reading {reading.seq} · {reading.netName}
      </span>
      <span className="block text-xl font-semibold">
        {reading.skipped ? "Skipped (can't reach)" : `${reading.valueText}: ${reading.verdict}`}
      </span>
      {reading.marginText ? (
        <span className="block text-sm">
          {reading.marginText} ({reading.windowText})
        </span>
      ) : null}
    </output>
  );
}

type StepLike = NonNullable<RunView["step"]>;

function CheckCard({
  step,
  seq,
  previousMode,
  conditionLabel,
  canWrite,
  busy,
  onReading,
  onSkip,
  onCancelCorrection,
}: {
  step: StepLike;
  seq: number;
  previousMode: StepLike["mode"] | null;
  conditionLabel: string;
  canWrite: boolean;
  busy: boolean;
  onReading: (text: string) => void;
  onSkip: () => void;
  onCancelCorrection?: () => void;
}) {
  const modeChanged =
    (previousMode === null && step.mode !== "voltage") ||
    (previousMode !== null && powerClass(previousMode) !== powerClass(step.mode));
  const [ready, setReady] = useState(!modeChanged);
  const [text, setText] = useState("");
  const [error, setError] = useState<string | null>(null);
  const inputRef = useRef<HTMLInputElement>(null);
  // Keyboard-first: the field takes focus whenever it can be typed in (new check, gate passed, save finished).
  useEffect(() => {
    if (ready && !busy) inputRef.current?.focus();
  }, [ready, busy]);
  const unpowered = powerClass(step.mode) === "unpowered";
  return (
    <section className="card flex flex-col gap-4" aria-labelledby="check-title">
      <div>
        <p className="text-sm text-muted">Check {seq}</p>
        <h2 id="check-title" className="font-mono text-3xl font-semibold">
          {step.netName}
        </h2>
        <p
          className={`mt-1 inline-block rounded px-2 py-1 text-sm font-medium ${unpowered ? "bg-info-soft text-info" : "bg-accent-soft text-accent"}`}
        >
          {MODE_LABELS[step.mode]}
        </p>
      </div>
      {!ready ? (
        <div className="rounded-md border-l-4 border-l-warn bg-warn-soft p-4" role="alert">
          <h3 className="font-semibold">
            {unpowered ? "Remove power and battery first" : "Power the board again"}
          </h3>
          <p className="mt-1 text-sm">
            {unpowered
              ? "Unplug the charger, disconnect the battery connector and wait a few seconds for the rails to discharge. A resistance or diode reading on a live board is wrong and can damage the meter."
              : `Reconnect as set for this run (${conditionLabel}), then press the power button.`}
          </p>
          <button type="button" className="btn btn-primary mt-3 min-h-12 px-6" onClick={() => setReady(true)}>
            {unpowered ? "Power and battery are removed" : "The board is powered"}
          </button>
        </div>
      ) : null}
      <dl className="grid gap-3 text-sm sm:grid-cols-2">
        {step.probeText ? (
          <div>
            <dt className="text-muted">Probe at</dt>
            <dd className="text-base font-medium">
              {step.probeText}
              {step.needsDisassembly ? " (board out or shield off)" : ""}
            </dd>
          </div>
        ) : null}
        <div>
          <dt className="text-muted">Expected</dt>
          <dd className="text-base font-medium" data-testid="expected">
            {step.expectedText}
          </dd>
        </div>
      </dl>
      {step.photo ? (
        <figure className="max-w-md" data-testid="probe-photo">
          <div className="relative">
            <img
              src={`/uploads/${step.photo.uploadId}`}
              alt={`Board photo: probe point for ${step.netName}`}
              className="w-full rounded-md border border-line"
            />
            <span
              aria-hidden="true"
              data-testid="probe-marker"
              className="absolute h-6 w-6 -translate-x-1/2 -translate-y-1/2 rounded-full border-4 border-accent shadow-[0_0_0_2px_white]"
              style={{ left: `${step.photo.x * 100}%`, top: `${step.photo.y * 100}%` }}
            />
          </div>
          <figcaption className="mt-1 text-xs text-muted">
            The ring marks where to probe{step.probeText ? `: ${step.probeText}` : ""}.
          </figcaption>
        </figure>
      ) : null}
      <p className="text-sm" data-testid="why">
        <span className="font-medium">Why this check: </span>
        {step.why}
      </p>
      {step.notes ? (
        <p className="text-sm">
          <span className="font-medium">From the map: </span>
          {step.notes}
        </p>
      ) : null}
      {step.safetyNotes ? (
        <p className="rounded-md border border-warn bg-warn-soft p-2 text-sm" data-testid="net-safety">
          <span className="font-medium">Careful: </span>
          {step.safetyNotes}
        </p>
      ) : null}
      {canWrite ? (
        <form
          className="flex flex-col gap-3"
          onSubmit={(e) => {
            e.preventDefault();
            const t = text.trim();
            if (!t) {
              setError("Type the reading first, e.g. 3.3, 450mV, 4k7 or OL.");
              return;
            }
            setError(null);
            onReading(t);
          }}
        >
          <label htmlFor="reading-text" className="text-sm font-medium">
            Reading ({step.unit})
          </label>
          <div className="flex flex-wrap gap-2">
            <input
              ref={inputRef}
              id="reading-text"
              name="text"
              value={text}
              onChange={(e) => setText(e.target.value)}
              disabled={!ready || busy}
              autoComplete="off"
              inputMode="text"
              aria-invalid={error ? true : undefined}
              aria-describedby={error ? "reading-error" : "reading-hint"}
              className="field-input min-h-14 max-w-xs font-mono text-2xl"
            />
            <button
              type="submit"
              className="btn btn-primary min-h-14 px-8 text-base"
              disabled={!ready || busy}
            >
              Save reading
            </button>
          </div>
          {error ? (
            <p id="reading-error" className="text-sm text-bad">
              {error}
            </p>
          ) : (
            <p id="reading-hint" className="text-xs text-muted">
              Enter saves. Units are optional: 3.3, 450mV, 4k7, OL.
            </p>
          )}
          <div className="flex flex-wrap gap-2">
            {onCancelCorrection ? (
              <button type="button" className="btn min-h-12" onClick={onCancelCorrection}>
                Cancel correction
              </button>
            ) : (
              <button type="button" className="btn min-h-12" onClick={onSkip} disabled={busy}>
                Can't reach this point (skip)
              </button>
            )}
          </div>
        </form>
      ) : (
        <p className="text-sm text-muted">Your role can follow this run but not take readings.</p>
      )}
    </section>
  );
}

function Contradictions({ items }: { items: RunView["contradictions"] }) {
  return (
    <section className="card border-l-4 border-l-warn bg-warn-soft" aria-labelledby="contra-title">
      <h2 id="contra-title" className="font-semibold">
        Readings disagree
      </h2>
      <ul className="mt-2 list-disc pl-5 text-sm">
        {items.map((c) => (
          <li key={c.message}>{c.message}</li>
        ))}
      </ul>
      <p className="mt-2 text-sm">Correct a reading from the history, or ask a lead for help below.</p>
    </section>
  );
}

function FindingCard({
  view,
  canWrite,
  canExtendMap,
}: {
  view: RunView;
  canWrite: boolean;
  canExtendMap: boolean;
}) {
  const f = view.finding!;
  const fetcher = useFetcher<ActionResult>();
  const errors = fetcher.data && !fetcher.data.ok ? fetcher.data : null;
  const nff = f.kind === "no-fault-found";
  const recorded = view.currentFinding?.outcome;
  const fixes = f.part?.fixes ?? [];
  const [fixId, setFixId] = useState<string>(fixes[0]?.id ?? "other");
  // A net short lists no fixes: the work is finding and replacing the shorted part.
  const fixKind = fixes.length ? (fixes.find((x) => x.id === fixId)?.kind ?? "other") : "replace";
  const cautions = cautionsFor({
    batteryAttached: view.run.condition !== "charger",
    resistanceReadings: view.readings.some((r) => r.mode !== "voltage" && !r.skipped),
    fixKinds: [fixKind],
  });
  return (
    <section
      className={`card flex flex-col gap-4 border-l-4 ${nff ? "border-l-info" : "border-l-ok"}`}
      aria-labelledby="finding-title"
    >
      <div>
        <h2 id="finding-title" className="text-xl font-semibold">
          {nff
            ? "No fault found in this map"
            : f.ambiguousWith?.length
              ? "Most likely fault"
              : "Fault isolated"}
        </h2>
        <p className="mt-1 text-lg" data-testid="finding-message">
          {f.message}
        </p>
      </div>
      {f.proving.length ? (
        <div>
          <h3 className="text-sm font-medium">Readings that prove it</h3>
          <ul className="mt-1 text-sm">
            {f.proving.map((r) => (
              <li key={r.id}>
                #{r.seq} {r.netName}: {r.valueText} ({r.verdict})
              </li>
            ))}
          </ul>
        </div>
      ) : null}
      {nff && !canExtendMap ? (
        <p className="text-sm">
          Every suspect in this map was cleared. The fault lies outside what the map covers: ask a lead for
          help below so the map can be extended from this run.
        </p>
      ) : null}
      {nff && canExtendMap && view.version.mapId ? (
        <div className="flex flex-wrap items-center gap-3">
          <p className="flex-1 text-sm">
            Every suspect in this map was cleared, so the fault lies outside what the map covers. Open the
            map's draft with this run's readings beside it to add what is missing.
          </p>
          <Link
            className="btn btn-primary min-h-12"
            to={`/maps/${view.version.mapId}?fromRun=${view.run.id}`}
          >
            Extend the map from this run
          </Link>
        </div>
      ) : null}
      {!nff && f.part ? (
        <div>
          <h3 className="text-sm font-medium">
            Fixes the map lists for {f.part.refdes} {f.part.name}
          </h3>
          <p className="text-xs text-muted">
            Success rates are this shop's results on this board after each fix.
          </p>
          {f.part.safetyNotes ? (
            <p
              className="mt-2 rounded-md border border-warn bg-warn-soft p-2 text-sm"
              data-testid="part-safety"
            >
              <span className="font-medium">The map's safety note for {f.part.refdes}: </span>
              {f.part.safetyNotes}
            </p>
          ) : null}
        </div>
      ) : null}
      {canWrite && !recorded ? (
        <fetcher.Form method="post" className="flex flex-col gap-4">
          <input type="hidden" name="intent" value="outcome" />
          <input type="hidden" name="round" value={view.run.round} />
          {!nff && f.part ? (
            <fieldset className="flex flex-col gap-2">
              <legend className="text-sm font-medium">What was done</legend>
              {f.part.fixes.map((fix, i) => {
                const rate = view.fixRates[fix.id];
                return (
                  <label
                    key={fix.id}
                    className="flex min-h-12 items-center gap-3 rounded-md border border-line px-3 py-2"
                  >
                    <input
                      type="radio"
                      name="fixId"
                      value={fix.id}
                      defaultChecked={i === 0}
                      onChange={() => setFixId(fix.id)}
                      className="h-5 w-5"
                    />
                    <span className="flex-1">{fix.label}</span>
                    <span className="text-sm text-muted">
                      {rate
                        ? `${rate.successes} of ${rate.tries} powered on (${Math.round((rate.successes / rate.tries) * 100)}%)`
                        : "not tried here yet"}
                    </span>
                  </label>
                );
              })}
              <label className="flex min-h-12 items-center gap-3 rounded-md border border-line px-3 py-2">
                <input
                  type="radio"
                  name="fixId"
                  value="other"
                  onChange={() => setFixId("other")}
                  className="h-5 w-5"
                />
                <span>Something else (say it in a note)</span>
              </label>
            </fieldset>
          ) : null}
          {!nff ? <FixCautions cautions={cautions} /> : null}
          {!nff ? (
            <div className="flex flex-col gap-1">
              <label htmlFor="parts-used" className="text-sm font-medium">
                Parts used (reference designators)
              </label>
              <input
                id="parts-used"
                name="partsUsed"
                defaultValue={f.part?.refdes ?? ""}
                className="field-input max-w-md"
                aria-invalid={errors?.fieldErrors?.partsUsed ? true : undefined}
                aria-describedby="parts-used-hint"
              />
              <p id="parts-used-hint" className="text-xs text-muted">
                Separate with commas, e.g. R362, C415.
              </p>
              {errors?.fieldErrors?.partsUsed ? (
                <p className="text-sm text-bad">{errors.fieldErrors.partsUsed[0]}</p>
              ) : null}
            </div>
          ) : (
            <input type="hidden" name="partsUsed" value="" />
          )}
          <fieldset className="flex flex-col gap-2">
            <legend className="text-sm font-medium">Outcome after re-test</legend>
            <div className="flex flex-wrap gap-2">
              {(["powers-on", "still-dead", "new-symptom"] as const).map((o) => (
                <label
                  key={o}
                  className="flex min-h-12 items-center gap-2 rounded-md border border-line px-4 py-2"
                >
                  <input type="radio" name="outcome" value={o} className="h-5 w-5" />
                  {OUTCOME_LABELS[o]}
                </label>
              ))}
            </div>
            {errors?.fieldErrors?.outcome ? (
              <p className="text-sm text-bad">{errors.fieldErrors.outcome[0]}</p>
            ) : null}
          </fieldset>
          {errors && !errors.fieldErrors ? (
            <p role="alert" className="text-sm text-bad">
              {errors.message}
            </p>
          ) : null}
          <button
            type="submit"
            className="btn btn-primary min-h-12 self-start px-6"
            disabled={fetcher.state !== "idle"}
          >
            Record fix and outcome
          </button>
        </fetcher.Form>
      ) : null}
    </section>
  );
}

/** The cautions for the work picked in the finding card, kept short: the report prints them in full too. */
function FixCautions({ cautions }: { cautions: Caution[] }) {
  return (
    <section
      aria-labelledby="fix-cautions-title"
      className="rounded-md border border-warn bg-warn-soft p-3 text-sm"
      data-testid="fix-cautions"
    >
      <h3 id="fix-cautions-title" className="font-semibold">
        Before this work
      </h3>
      <CautionList cautions={cautions} small />
    </section>
  );
}

function NoteForm({
  intent,
  runId,
  children,
  submitLabel,
  primary,
  withPhoto,
}: {
  intent: "note" | "help" | "lead-note" | "lead-step";
  runId: string;
  children: React.ReactNode;
  submitLabel: string;
  primary?: boolean;
  withPhoto?: boolean;
}) {
  const fetcher = useFetcher<ActionResult>({ key: `${intent}-${runId}` });
  const ref = useRef<HTMLFormElement>(null);
  const done = fetcher.state === "idle" && fetcher.data?.ok;
  useEffect(() => {
    if (done) ref.current?.reset();
  }, [done]);
  return (
    <fetcher.Form
      method="post"
      ref={ref}
      className="flex flex-col gap-2"
      encType={withPhoto ? "multipart/form-data" : undefined}
    >
      <input type="hidden" name="intent" value={intent} />
      {children}
      {withPhoto ? (
        <>
          <label htmlFor={`${intent}-photo`} className="text-sm">
            Photo <span className="text-muted">(optional; JPEG, PNG or WebP up to 8 MB)</span>
          </label>
          <input
            id={`${intent}-photo`}
            name="photo"
            type="file"
            accept="image/jpeg,image/png,image/webp"
            className="field-input"
          />
        </>
      ) : null}
      {fetcher.data && !fetcher.data.ok ? (
        <p role="alert" className="text-sm text-bad">
          {fetcher.data.message}
        </p>
      ) : null}
      <button
        type="submit"
        className={`btn min-h-12 self-start ${primary ? "btn-primary" : ""}`}
        disabled={fetcher.state !== "idle"}
      >
        {fetcher.state === "submitting" && withPhoto ? "Saving…" : submitLabel}
      </button>
    </fetcher.Form>
  );
}

function Notes({ view, canWrite, canHelp }: { view: RunView; canWrite: boolean; canHelp: boolean }) {
  const needHelp = view.contradictions.length > 0 || view.finding?.kind === "no-fault-found";
  const open = view.run.status !== "closed";
  return (
    <section className="card flex flex-col gap-3" aria-labelledby="notes-title">
      <h2 id="notes-title" className="font-semibold">
        Notes and help
      </h2>
      {view.notes.length ? (
        <ul className="flex flex-col gap-2 text-sm" data-testid="notes">
          {view.notes.map((n) => (
            <li
              key={n.id}
              className={`rounded-md px-3 py-2 ${n.kind.startsWith("lead") ? "bg-info-soft" : n.kind === "help" ? "bg-warn-soft" : "bg-sunken"}`}
            >
              <span className="font-medium">
                {n.kind === "help"
                  ? "Help asked"
                  : n.kind === "lead-step"
                    ? "Lead added a check"
                    : n.kind === "lead-note"
                      ? "Lead note"
                      : "Note"}{" "}
                · {n.author}:
              </span>{" "}
              {n.text}
              {n.kind === "lead-step" ? (
                <span className="text-muted"> {n.done ? "(done)" : "(next on screen)"}</span>
              ) : null}
              {n.photoId ? (
                <a
                  href={`/uploads/${n.photoId}`}
                  target="_blank"
                  rel="noreferrer"
                  className="mt-2 block w-fit"
                >
                  <img
                    src={`/uploads/${n.photoId}`}
                    alt={`Attached by ${n.author}: ${n.text.slice(0, 80)}`}
                    className="max-h-40 rounded border border-line"
                    loading="lazy"
                  />
                </a>
              ) : null}
            </li>
          ))}
        </ul>
      ) : (
        <p className="text-sm text-muted">No notes yet.</p>
      )}
      {canWrite && open ? (
        <div className="grid gap-3 md:grid-cols-2">
          <NoteForm intent="note" runId={view.run.id} submitLabel="Save note" withPhoto>
            <label htmlFor="note-text" className="text-sm font-medium">
              Add a note
            </label>
            <textarea id="note-text" name="text" rows={2} className="field-input" />
          </NoteForm>
          <NoteForm intent="help" runId={view.run.id} submitLabel="Ask for help" primary={needHelp}>
            <label htmlFor="help-text" className="text-sm font-medium">
              {needHelp ? "Stuck? Ask a lead (recommended now)" : "Ask a lead for help"}
            </label>
            <textarea id="help-text" name="text" rows={2} className="field-input" />
          </NoteForm>
        </div>
      ) : null}
      {canHelp && open ? (
        <div className="grid gap-3 border-t border-line pt-3 md:grid-cols-2">
          <NoteForm intent="lead-note" runId={view.run.id} submitLabel="Send note">
            <label htmlFor="lead-note-text" className="text-sm font-medium">
              Lead: note for the technician
            </label>
            <textarea id="lead-note-text" name="text" rows={2} className="field-input" />
          </NoteForm>
          <NoteForm intent="lead-step" runId={view.run.id} submitLabel="Add check">
            <label htmlFor="lead-step-net" className="text-sm font-medium">
              Lead: add a check on net
            </label>
            <select id="lead-step-net" name="netId" className="field-input">
              {view.measurableNets.map((n) => (
                <option key={n.id} value={n.id}>
                  {n.name}
                </option>
              ))}
            </select>
            <label htmlFor="lead-step-mode" className="text-sm">
              Measure
            </label>
            <select id="lead-step-mode" name="mode" className="field-input">
              <option value="voltage">Voltage, powered</option>
              <option value="resistance">Resistance to ground, unpowered</option>
              <option value="diode">Diode drop, unpowered</option>
            </select>
            <label htmlFor="lead-step-text" className="text-sm">
              Why
            </label>
            <input id="lead-step-text" name="text" className="field-input" />
          </NoteForm>
        </div>
      ) : null}
    </section>
  );
}

function Suspects({ view }: { view: RunView }) {
  return (
    <section className="card" aria-labelledby="suspects-title">
      <h2 id="suspects-title" className="font-semibold">
        Suspects ({view.suspectCount})
      </h2>
      {view.run.strategy === "best" ? (
        <p className="text-xs text-muted" data-testid="learned-from">
          {learnedFromText(view.learnedFrom)} <span className="block">{LEARNED_FROM_COUNTS}</span>
        </p>
      ) : null}
      <ol className="mt-2 flex flex-col gap-1 text-sm" data-testid="suspects">
        {view.suspects.map((s) => (
          <li key={s.id} className="flex items-center gap-2">
            <span className="flex-1">{s.label}</span>
            <span className="w-12 text-right font-mono text-muted">{Math.round(s.probability * 100)}%</span>
            <span aria-hidden="true" className="h-2 w-16 rounded bg-sunken">
              <span
                className="block h-2 rounded bg-accent"
                style={{ width: `${Math.round(s.probability * 100)}%` }}
              />
            </span>
          </li>
        ))}
      </ol>
    </section>
  );
}

const NET_STATE = {
  present: { label: "present", cls: "border-ok bg-ok-soft" },
  missing: { label: "missing", cls: "border-bad bg-bad-soft" },
  suspect: { label: "suspect", cls: "border-warn bg-panel" },
  unpowered: { label: "not powered", cls: "border-line bg-sunken text-muted" },
} as const;

function MapView({ nets }: { nets: RunView["nets"] }) {
  // Grouped by stage in power-up order, as the strip above reads; within a stage, in the map's order.
  const stages = STAGES_IN_ORDER.filter((stage) => nets.some((n) => n.stage === stage));
  return (
    <section className="card" aria-labelledby="map-title">
      <h2 id="map-title" className="font-semibold">
        Map, in power-up order
      </h2>
      <div className="mt-2 flex flex-col gap-2">
        {stages.map((stage) => (
          <div key={stage}>
            <h3 className="text-xs font-semibold text-muted">{stage}</h3>
            <ul className="flex flex-wrap gap-1">
              {nets
                .filter((n) => n.stage === stage)
                .map((n) => (
                  <li
                    key={n.id}
                    className={`rounded border px-2 py-0.5 font-mono text-xs ${NET_STATE[n.state].cls}`}
                    title={NET_STATE[n.state].label}
                  >
                    {n.name} <span className="sr-only">{NET_STATE[n.state].label}</span>
                    <span aria-hidden="true">
                      {n.state === "present"
                        ? "✓"
                        : n.state === "missing"
                          ? "✗"
                          : n.state === "suspect"
                            ? "?"
                            : "–"}
                    </span>
                  </li>
                ))}
            </ul>
          </div>
        ))}
      </div>
      <p className="mt-2 text-xs text-muted">
        ✓ proven present · ✗ proven missing · ? still suspect · – not powered
      </p>
    </section>
  );
}

function History({
  readings,
  round,
  canCorrect,
  onCorrect,
}: {
  readings: RunView["readings"];
  round: number;
  canCorrect: boolean;
  onCorrect: (r: RunView["readings"][number]) => void;
}) {
  const replaced = new Set(readings.map((r) => r.replacesId).filter(Boolean));
  return (
    <section className="card" aria-labelledby="history-title">
      <h2 id="history-title" className="font-semibold">
        Readings ({readings.length})
      </h2>
      <ol className="mt-2 flex flex-col gap-1 text-sm" data-testid="history">
        {[...readings].reverse().map((r) => (
          <li
            key={r.id}
            className={`flex flex-wrap items-center gap-2 ${replaced.has(r.id) ? "text-muted line-through" : ""}`}
          >
            <span className="w-8 text-muted">#{r.seq}</span>
            <span className="flex-1 font-mono">
              {r.netName} {r.mode !== "voltage" ? `(${r.mode})` : ""}: {r.valueText} · {r.verdict}
              {r.replacesId ? " (correction)" : ""}
              {r.round !== round ? ` · round ${r.round}` : ""}
            </span>
            {canCorrect && !replaced.has(r.id) && !r.skipped && r.round === round ? (
              <button
                type="button"
                className="btn min-h-10 px-2 py-1 text-xs"
                onClick={() => onCorrect(r)}
                aria-label={`Correct reading ${r.seq} of ${r.netName}`}
              >
                Correct
              </button>
            ) : null}
          </li>
        ))}
      </ol>
    </section>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [
  { title: data?.view?.board ? `Run · ${data.view.board.boardNumber} · Railwise` : "Run · Railwise" },
];

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  const status = isRouteErrorResponse(error) ? error.status : 500;
  const message =
    isRouteErrorResponse(error) && typeof error.data === "string"
      ? error.data
      : "This run could not be shown.";
  return (
    <div className="card">
      <h1 className="text-xl font-semibold">
        {status === 404 ? "Run not found" : status === 403 ? "Not allowed" : "Something went wrong"}
      </h1>
      <p className="mt-2 text-muted">{message}</p>
      <Link className="link mt-3 inline-block" to="/runs">
        Back to runs
      </Link>
    </div>
  );
}
