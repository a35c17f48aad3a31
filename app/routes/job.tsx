import { and, eq } from "drizzle-orm";
import { data, Form, Link, useActionData, useNavigation } from "react-router";
import { z } from "zod";
import { FieldErrors } from "~/components/field";
import { PageHeader } from "~/components/page-header";
import { useMember } from "~/components/use-member";
import { STATUS_UPDATE_LABELS, STATUS_UPDATES } from "~/lib/customer-updates";
import { JOB_STATE_LABELS, JOB_STATES, type JobState } from "~/lib/job-states";
import { formatMoney, formatRate, minorToInput, parseMoney } from "~/lib/money";
import { can } from "~/lib/permissions";
import { audit } from "~/server/audit.server";
import { requireMember } from "~/server/auth.server";
import { sendQuoteEmail, sendStatusUpdate } from "~/server/customer-email.server";
import { db } from "~/server/db.server";
import { appUrl } from "~/server/email.server";
import { newId } from "~/server/ids.server";
import { listJobPhotos } from "~/server/job-photos.server";
import {
  allowedMoves,
  approvedQuoteWithoutInvoice,
  billingOf,
  getCustomer,
  getJob,
  listEvents,
  listTechs,
  recordQuoteDecision,
  runsOfJob,
  transitionJob,
} from "~/server/jobs.server";
import { openPasscode } from "~/server/passcode.server";
import {
  counterPaymentByKey,
  createCheckout,
  PaymentsOffError,
  paymentsMode,
  recordCounterPayment,
  refundPayment,
} from "~/server/payments.server";
import {
  balanceOf,
  currentInvoice,
  getQuote,
  issueQuoteLink,
  paymentsOfInvoice,
  quotesOfJob,
  raiseInvoice,
} from "~/server/quotes.server";
import { boards, jobs, members } from "~/server/schema.server";
import { redirectWithToast } from "~/server/toast.server";
import type { Route } from "./+types/job";

async function loadJob(request: Request, jobId: string, permission: "view:jobs" = "view:jobs") {
  const ctx = await requireMember(request, { permission });
  const job = await getJob(ctx.shop.id, jobId);
  if (!job) throw new Response("That job was not found in your shop.", { status: 404 });
  return { ...ctx, job };
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const { shop, user, role, job } = await loadJob(request, params.jobId);
  const [customer, board, events, work, quoteList, invoice, techs, photos, billing, original, comebacks] =
    await Promise.all([
      getCustomer(shop.id, job.customerId),
      job.boardId
        ? db
            .select()
            .from(boards)
            .where(and(eq(boards.shopId, shop.id), eq(boards.id, job.boardId)))
            .get()
        : undefined,
      listEvents(shop.id, job.id),
      runsOfJob(shop.id, job.id),
      quotesOfJob(shop.id, job.id),
      currentInvoice(shop.id, job.id),
      listTechs(shop.id),
      listJobPhotos(shop.id, job.id),
      billingOf(job),
      job.warrantyOfJobId ? getJob(shop.id, job.warrantyOfJobId) : undefined,
      db
        .select({ id: jobs.id, number: jobs.number })
        .from(jobs)
        .where(and(eq(jobs.shopId, shop.id), eq(jobs.warrantyOfJobId, job.id)))
        .all(),
    ]);
  const paymentList = invoice ? await paymentsOfInvoice(shop.id, invoice.id) : [];
  // Newest first: the approved quote still waiting for its invoice, if any.
  const owedQuote = invoice ? undefined : quoteList.find((q) => q.status === "approved" && q.totalMinor > 0);
  return {
    shop: { currency: shop.currency, taxRateBp: shop.taxRateBp, warrantyDays: shop.warrantyDays },
    job: {
      id: job.id,
      number: job.number,
      state: job.state,
      serial: job.serial,
      complaint: job.complaint,
      conditionNotes: job.conditionNotes,
      accessories: job.accessories,
      diagnosticFeeMinor: job.diagnosticFeeMinor,
      termsAcceptedAt: job.termsAcceptedAt?.getTime() ?? null,
      chargeable: job.chargeable,
      hasPasscode: !!job.passcodeSealed,
      assignedTo: job.assignedTo,
      waivedAt: job.waivedAt?.getTime() ?? null,
      waiverReason: job.waiverReason,
      createdAt: job.createdAt.getTime(),
      closedAt: job.closedAt?.getTime() ?? null,
      anonymised: !!job.anonymisedAt,
    },
    customer: customer
      ? {
          id: customer.id,
          name: customer.name,
          email: customer.email,
          phone: customer.phone,
          consentToContact: customer.consentToContact,
          erased: !!customer.erasedAt,
        }
      : null,
    board: board
      ? {
          id: board.id,
          label: `${board.maker} ${board.model}`,
          number: board.boardNumber,
          revision: board.revision,
        }
      : null,
    events: events.map((e) => ({ ...e, at: e.at.getTime() })),
    work: {
      runs: work.runs.map((r) => ({
        id: r.id,
        status: r.status,
        outcome: r.outcome,
        techName: r.techName,
        startedAt: r.startedAt.getTime(),
      })),
      findings: work.findings.map((f) => ({
        id: f.id,
        runId: f.runId,
        kind: f.kind,
        nodeLabel: f.nodeLabel,
        fixLabel: f.fixLabel,
        outcome: f.outcome,
      })),
      parts: work.parts,
      minutes: work.minutes,
    },
    quotes: quoteList.map((q) => ({
      id: q.id,
      number: q.number,
      status: q.status,
      currency: q.currency,
      subtotalMinor: q.subtotalMinor,
      taxMinor: q.taxMinor,
      totalMinor: q.totalMinor,
      taxRateBp: q.taxRateBp,
      depositMinor: q.depositMinor,
      sentAt: q.sentAt?.getTime() ?? null,
      decidedAt: q.decidedAt?.getTime() ?? null,
      expiresAt: q.expiresAt?.getTime() ?? null,
      lines: q.lines.map((l) => ({
        id: l.id,
        kind: l.kind,
        description: l.description,
        quantity: l.quantity,
        unitMinor: l.unitMinor,
        totalMinor: l.totalMinor,
      })),
    })),
    invoice: invoice
      ? {
          id: invoice.id,
          number: invoice.number,
          status: invoice.status,
          currency: invoice.currency,
          totalMinor: invoice.totalMinor,
          paidMinor: invoice.paidMinor,
          refundedMinor: invoice.refundedMinor,
          balanceMinor: balanceOf(invoice),
          paidAt: invoice.paidAt?.getTime() ?? null,
        }
      : null,
    payments: paymentList.map((p) => ({
      id: p.id,
      kind: p.kind,
      method: p.method,
      status: p.status,
      amountMinor: p.amountMinor,
      refundOf: p.refundOf,
      note: p.note,
      at: (p.settledAt ?? p.createdAt).getTime(),
    })),
    billing,
    owedQuote: owedQuote ? { number: owedQuote.number, totalMinor: owedQuote.totalMinor } : null,
    moves: allowedMoves(job, role).map((t) => ({ to: t.to, label: t.label })),
    techs,
    canRevealPasscode: !!job.passcodeSealed && job.assignedTo === user.id,
    photos,
    original: original ? { id: original.id, number: original.number } : null,
    comebacks,
    onlinePayments: paymentsMode() !== "off",
    counterKey: newId(),
    me: user.id,
  };
}

const MoveSchema = z.object({ to: z.enum(JOB_STATES) });
const AssignSchema = z.object({ userId: z.string() });
const AmountSchema = z.object({ amount: z.string() });
const CounterSchema = AmountSchema.extend({
  method: z.enum(["cash", "card-terminal"]),
  note: z.string().max(200).default(""),
  // Drawn fresh with every page load (see the loader), so one form's submits share it.
  idempotencyKey: z
    .string()
    .regex(/^[a-z2-7]{16,64}$/)
    .optional(),
});
const RefundSchema = AmountSchema.extend({ paymentId: z.string() });
const WaiveSchema = z.object({ reason: z.string().trim().min(3, "Say why the charge is waived.").max(300) });

type Failure = { intent: string; message: string; field?: string };
const fail = (intent: string, message: string, status = 400, field?: string) =>
  data({ ok: false as const, intent, message, field } satisfies Failure & { ok: false }, { status });

export async function action({ request, params }: Route.ActionArgs) {
  const { shop, user, role, job } = await loadJob(request, params.jobId);
  const form = Object.fromEntries(await request.formData()) as Record<string, string>;
  const intent = form.intent ?? "";
  const back = `/jobs/${job.id}`;
  const refuseRole = () => fail(intent, "Your role in this shop does not allow this.", 403);

  if (intent === "move") {
    const parsed = MoveSchema.safeParse(form);
    if (!parsed.success) return fail(intent, "Choose a state.");
    const to = parsed.data.to;
    const actor = { kind: "member" as const, id: user.id, role };
    // The customer's answer given to the desk: the quote is decided and billed as on the approval page.
    const result =
      job.state === "awaiting-approval" && (to === "repairing" || to === "declined")
        ? await recordQuoteDecision(shop, job, to === "repairing" ? "approved" : "declined", actor)
        : await transitionJob(job, to, actor);
    if (!result.ok) return fail(intent, result.message, result.status);
    return redirectWithToast(back, {
      kind: "success",
      message: `Job #${job.number} is now ${JOB_STATE_LABELS[parsed.data.to]}.`,
    });
  }

  if (intent === "assign") {
    const parsed = AssignSchema.safeParse(form);
    if (!parsed.success) return fail(intent, "Choose a technician.");
    const target = parsed.data.userId;
    // The desk, leads and owners hand jobs out; a technician may only take a job nobody has yet. Taking one
    // from another technician would also open its device passcode to them (shown to the assigned one only).
    if (!can(role, "edit:jobs")) {
      if (target !== user.id) return refuseRole();
      if (job.assignedTo && job.assignedTo !== user.id)
        return fail(
          intent,
          "This job is already assigned to another technician. Ask a lead or the desk to hand it over.",
          409,
        );
    }
    if (target) {
      const member = await db
        .select({ role: members.role })
        .from(members)
        .where(and(eq(members.shopId, shop.id), eq(members.userId, target)))
        .get();
      if (!member || member.role === "desk") return fail(intent, "Choose a technician of this shop.");
    }
    await db
      .update(jobs)
      .set({ assignedTo: target || null })
      .where(and(eq(jobs.shopId, shop.id), eq(jobs.id, job.id)));
    await audit({
      shopId: shop.id,
      actorId: user.id,
      action: "job.assigned",
      subject: job.id,
      data: { to: target || null },
    });
    return redirectWithToast(back, {
      kind: "success",
      message: target ? "Technician assigned." : "Job unassigned.",
    });
  }

  if (intent === "reveal-passcode") {
    if (!job.passcodeSealed) return fail(intent, "No passcode is held for this job.", 404);
    if (job.assignedTo !== user.id)
      return fail(intent, "Only the technician assigned to this job can see its passcode.", 403);
    await audit({ shopId: shop.id, actorId: user.id, action: "job.passcode-viewed", subject: job.id });
    return { ok: true as const, intent, passcode: openPasscode(job.passcodeSealed, job.id) };
  }

  if (intent === "comeback") {
    if (!can(role, "edit:jobs")) return refuseRole();
    return redirectWithToast(`/jobs/new?warrantyOf=${job.id}`, {
      kind: "info",
      message: `Warranty comeback of job #${job.number}.`,
    });
  }

  const device = async () => {
    const board = job.boardId
      ? await db.select().from(boards).where(eq(boards.id, job.boardId)).get()
      : undefined;
    return board ? `${board.maker} ${board.model}` : "device";
  };

  if (intent === "email-update") {
    if (!can(role, "edit:jobs")) return refuseRole();
    const kind = STATUS_UPDATES.find((k) => k === form.kind);
    if (!kind) return fail(intent, "Choose an update to send.");
    const customer = await getCustomer(shop.id, job.customerId);
    if (!customer) return fail(intent, "This job has no customer.");
    const sent = await sendStatusUpdate(
      kind,
      { shop, job: { id: job.id, number: job.number, device: await device() }, customer },
      user.id,
    );
    if (!sent.sent) return fail(intent, sent.reason);
    return redirectWithToast(back, {
      kind: "success",
      message: `“${STATUS_UPDATE_LABELS[kind]}” e-mailed to ${customer.email}.`,
    });
  }

  if (intent === "send-quote") {
    if (!can(role, "edit:jobs")) return refuseRole();
    const quote = await getQuote(shop.id, form.quoteId ?? "");
    if (!quote || quote.jobId !== job.id) return fail(intent, "That quote is not on this job.", 404);
    if (quote.status === "approved" || quote.status === "declined")
      return fail(intent, "The customer has already decided on this quote.", 409);
    if (job.state !== "diagnosing" && job.state !== "awaiting-approval") {
      return fail(intent, "A quote is sent while the job is being diagnosed or awaits approval.", 409);
    }
    const customer = await getCustomer(shop.id, job.customerId);
    if (!customer?.email)
      return fail(intent, "The customer has no e-mail address; give the quote by phone and record it.");
    if (job.state === "diagnosing") {
      const moved = await transitionJob(
        job,
        "awaiting-approval",
        { kind: "member", id: user.id, role },
        `Quote ${quote.number} sent`,
      );
      if (!moved.ok) return fail(intent, moved.message, moved.status);
    }
    const { token, expiresAt } = await issueQuoteLink(quote);
    await sendQuoteEmail({
      shop,
      job: { id: job.id, number: job.number, device: await device() },
      customer,
      totalMinor: quote.totalMinor,
      link: appUrl(request, `/q/${token}`),
      expiresAt,
    });
    await audit({
      shopId: shop.id,
      actorId: user.id,
      action: "quote.sent",
      subject: quote.id,
      data: { to: customer.email },
    });
    return redirectWithToast(back, {
      kind: "success",
      message: `Quote ${quote.number} e-mailed to ${customer.email}.`,
    });
  }

  if (intent === "raise-invoice") {
    if (!can(role, "manage:payments")) return refuseRole();
    if (await currentInvoice(shop.id, job.id)) return fail(intent, "This job already has an invoice.", 409);
    // An approved quote whose invoice was never raised is what the customer owes, before any fee alone.
    const approved = await approvedQuoteWithoutInvoice(job);
    if (approved) {
      await raiseInvoice(shop, job.id, { quote: approved });
      return redirectWithToast(back, {
        kind: "success",
        message: `Invoice raised from the approved quote ${approved.number}.`,
      });
    }
    if (!job.chargeable) return fail(intent, "Warranty work is free of charge.", 409);
    await raiseInvoice(shop, job.id, { diagnosticFeeMinor: job.diagnosticFeeMinor });
    return redirectWithToast(back, { kind: "success", message: "Invoice for the diagnostic fee raised." });
  }

  if (intent === "counter-payment" || intent === "online-payment") {
    if (!can(role, "manage:payments")) return refuseRole();
    // A second submit of the same counter form (double click, resent request) records nothing more.
    const key =
      intent === "counter-payment" ? CounterSchema.shape.idempotencyKey.safeParse(form.idempotencyKey) : null;
    if (key?.success && key.data && (await counterPaymentByKey(shop.id, key.data))) {
      return redirectWithToast(back, { kind: "info", message: "That payment was already recorded." });
    }
    const invoice = await currentInvoice(shop.id, job.id);
    if (!invoice)
      return fail(intent, "Raise an invoice first (approve a quote or bill the diagnostic fee).", 409);
    const amount = parseMoney(form.amount ?? "", invoice.currency);
    if (!amount.ok) return fail(intent, amount.message, 400, "amount");
    const balance = balanceOf(invoice);
    if (amount.minor < 1 || amount.minor > balance) {
      return fail(
        intent,
        `Enter an amount between ${formatMoney(1, invoice.currency)} and the balance, ${formatMoney(balance, invoice.currency)}.`,
        400,
        "amount",
      );
    }
    if (intent === "counter-payment") {
      const parsed = CounterSchema.safeParse(form);
      if (!parsed.success) return fail(intent, "Choose cash or card terminal.");
      const recorded = await recordCounterPayment({
        shopId: shop.id,
        invoice,
        amountMinor: amount.minor,
        method: parsed.data.method,
        note: parsed.data.note,
        actorId: user.id,
        idempotencyKey: parsed.data.idempotencyKey,
      });
      return redirectWithToast(back, {
        kind: recorded.duplicate ? "info" : "success",
        message: recorded.duplicate
          ? "That payment was already recorded."
          : `${formatMoney(amount.minor, invoice.currency)} recorded.`,
      });
    }
    const customer = await getCustomer(shop.id, job.customerId);
    try {
      const checkout = await createCheckout({
        shop,
        invoice,
        jobNumber: job.number,
        amountMinor: amount.minor,
        kind: amount.minor < balance ? "deposit" : "payment",
        customerEmail: customer?.email ?? null,
        successUrl: appUrl(request, `${back}?paid=1`),
        cancelUrl: appUrl(request, back),
        actorId: user.id,
      });
      return { ok: true as const, intent, checkoutUrl: checkout.url };
    } catch (error) {
      if (error instanceof PaymentsOffError) return fail(intent, error.message, 503);
      throw error;
    }
  }

  if (intent === "refund") {
    if (!can(role, "refund:payments")) return refuseRole();
    const parsed = RefundSchema.safeParse(form);
    if (!parsed.success) return fail(intent, "Choose a payment to refund.");
    const invoice = await currentInvoice(shop.id, job.id);
    const amount = parseMoney(parsed.data.amount, invoice?.currency ?? shop.currency);
    if (!amount.ok) return fail(intent, amount.message, 400, "amount");
    const result = await refundPayment({
      shopId: shop.id,
      paymentId: parsed.data.paymentId,
      amountMinor: amount.minor,
      actorId: user.id,
    });
    if (!result.ok) return fail(intent, result.message);
    return redirectWithToast(back, {
      kind: "success",
      message: `Refund of ${formatMoney(amount.minor, invoice?.currency ?? shop.currency)} made.`,
    });
  }

  if (intent === "waive") {
    if (!can(role, "waive:invoice")) return refuseRole();
    const parsed = WaiveSchema.safeParse(form);
    if (!parsed.success) return fail(intent, parsed.error.issues[0].message, 400, "reason");
    await db
      .update(jobs)
      .set({ waivedAt: new Date(), waivedBy: user.id, waiverReason: parsed.data.reason })
      .where(and(eq(jobs.shopId, shop.id), eq(jobs.id, job.id)));
    await audit({
      shopId: shop.id,
      actorId: user.id,
      action: "invoice.waived",
      subject: job.id,
      data: { reason: parsed.data.reason },
    });
    return redirectWithToast(back, {
      kind: "success",
      message: "Charge waived; the job can be closed unpaid.",
    });
  }

  return fail(intent, "Unknown action.");
}

export default function JobRoute({ loaderData }: Route.ComponentProps) {
  const d = loaderData;
  const { can: may } = useMember();
  const actionData = useActionData<typeof action>();
  const { job } = d;
  return (
    <>
      <PageHeader
        title={`Job #${job.number}`}
        subtitle={`${d.board ? `${d.board.label} · ${d.board.number}` : "Board not in the library"} · serial ${job.serial || "—"}`}
        actions={
          <>
            <Link to={`/jobs/${job.id}/tag`} className="btn">
              Print tag
            </Link>
            <Link to="/jobs" className="btn">
              All jobs
            </Link>
          </>
        }
      />
      <StateStrip state={job.state} />
      {actionData && !actionData.ok ? (
        <p role="alert" className="mb-4 rounded-md border border-bad bg-bad-soft px-3 py-2 text-sm">
          {actionData.message}
        </p>
      ) : null}
      <div className="grid gap-6 lg:grid-cols-3">
        <div className="flex flex-col gap-6 lg:col-span-2">
          <section className="card" aria-labelledby="moves-h">
            <h2 id="moves-h" className="mb-3 font-semibold">
              Next step
            </h2>
            {d.moves.length ? (
              <div className="flex flex-wrap gap-2">
                {d.moves.map((m) => (
                  <Form method="post" key={m.to}>
                    <input type="hidden" name="intent" value="move" />
                    <input type="hidden" name="to" value={m.to} />
                    <button
                      type="submit"
                      className={`btn ${m.to === "closed" || m.to === "declined" ? "" : "btn-primary"}`}
                    >
                      {m.label}
                    </button>
                  </Form>
                ))}
              </div>
            ) : (
              <p className="text-sm text-muted">
                {job.state === "closed"
                  ? "This job is closed."
                  : "Nothing for your role to do on this job right now."}
              </p>
            )}
            {job.state === "ready" || job.state === "declined" ? (
              <p className="mt-2 text-sm text-muted">
                {d.billing === "unpaid" && !job.waivedAt
                  ? "Closing needs the invoice paid, or a waiver recorded by the owner."
                  : d.billing === "paid"
                    ? "The invoice is paid."
                    : d.billing === "nothing-owed"
                      ? "Nothing is owed on this job."
                      : "The charge was waived."}
              </p>
            ) : null}
            {(job.state === "received" || job.state === "diagnosing") && may("run:diagnosis") ? (
              <p className="mt-3">
                <Link className="link" to={`/runs/new?jobId=${job.id}`}>
                  Start a guided diagnosis run for this job
                </Link>
              </p>
            ) : null}
          </section>

          <DeviceCard d={d} />
          <WorkCard work={d.work} jobId={job.id} />
          <QuotesCard d={d} canEdit={may("edit:jobs")} />
        </div>
        <div className="flex flex-col gap-6">
          <CustomerCard d={d} canEmail={may("edit:jobs")} />
          <BillingCard d={d} />
          <Timeline events={d.events} />
        </div>
      </div>
    </>
  );
}

function StateStrip({ state }: { state: JobState }) {
  const line: JobState[] = [
    "received",
    "diagnosing",
    "awaiting-approval",
    "repairing",
    "testing",
    "ready",
    "closed",
  ];
  const at = line.indexOf(state);
  return (
    <ol aria-label="Job progress" className="mb-6 flex flex-wrap gap-1 text-xs">
      {line.map((s, i) => (
        <li
          key={s}
          aria-current={s === state ? "step" : undefined}
          className={`rounded px-2 py-1 ${s === state ? "bg-accent text-on-accent font-semibold" : i < at ? "bg-ok-soft text-ok" : "bg-sunken text-muted"}`}
        >
          {JOB_STATE_LABELS[s]}
        </li>
      ))}
      {state === "declined" ? (
        <li aria-current="step" className="rounded bg-bad-soft px-2 py-1 font-semibold text-bad">
          Declined, returned unrepaired
        </li>
      ) : null}
    </ol>
  );
}

type D = Route.ComponentProps["loaderData"];

function DeviceCard({ d }: { d: D }) {
  const { job } = d;
  const actionData = useActionData<typeof action>();
  const passcode = actionData?.ok && "passcode" in actionData ? actionData.passcode : null;
  const { member, can: may } = useMember();
  return (
    <section className="card" aria-labelledby="device-h">
      <h2 id="device-h" className="mb-3 font-semibold">
        Device and intake
      </h2>
      {job.anonymised ? (
        <p className="mb-2 text-sm text-muted">Personal data of this job was erased.</p>
      ) : null}
      <dl className="grid grid-cols-1 gap-x-6 gap-y-2 text-sm sm:grid-cols-2">
        <Item term="Complaint">{job.complaint || "—"}</Item>
        <Item term="Condition on arrival">{job.conditionNotes || "—"}</Item>
        <Item term="Accessories received">{job.accessories || "none"}</Item>
        <Item term="Diagnostic fee">
          {job.chargeable ? formatMoney(job.diagnosticFeeMinor, d.shop.currency) : "free (warranty)"}
        </Item>
        <Item term="Terms accepted">
          {job.termsAcceptedAt
            ? new Date(job.termsAcceptedAt).toISOString().slice(0, 16).replace("T", " ")
            : "—"}
        </Item>
        <Item term="Taken in">{new Date(job.createdAt).toISOString().slice(0, 10)}</Item>
        {d.original ? (
          <Item term="Warranty comeback of">
            <Link className="link" to={`/jobs/${d.original.id}`}>
              job #{d.original.number}
            </Link>
          </Item>
        ) : null}
        {d.comebacks.length ? (
          <Item term="Comebacks">
            {d.comebacks.map((c) => (
              <Link key={c.id} className="link mr-2" to={`/jobs/${c.id}`}>
                #{c.number}
              </Link>
            ))}
          </Item>
        ) : null}
      </dl>
      {d.photos.length ? (
        <div className="mt-3 flex flex-wrap gap-2">
          {d.photos.map((p, i) => (
            <a key={p.id} href={`/jobs/${job.id}/photos/${p.id}`} target="_blank" rel="noreferrer">
              <img
                src={`/jobs/${job.id}/photos/${p.id}`}
                alt={`Device as received, view ${i + 1}`}
                className="h-24 w-24 rounded border border-line object-cover"
              />
            </a>
          ))}
        </div>
      ) : null}
      <div className="mt-4 flex flex-wrap items-end gap-4 border-t border-line pt-3">
        <Form method="post" className="flex items-end gap-2">
          <input type="hidden" name="intent" value="assign" />
          <div className="flex flex-col gap-1">
            <label htmlFor="assign" className="text-sm font-medium">
              Technician
            </label>
            {may("edit:jobs") ? (
              <select
                id="assign"
                name="userId"
                defaultValue={job.assignedTo ?? ""}
                className="field-input py-1"
              >
                <option value="">Nobody yet</option>
                {d.techs.map((t) => (
                  <option key={t.userId} value={t.userId}>
                    {t.name}
                  </option>
                ))}
              </select>
            ) : (
              <>
                <span id="assign" className="text-sm">
                  {d.techs.find((t) => t.userId === job.assignedTo)?.name ?? "Nobody yet"}
                </span>
                <input type="hidden" name="userId" value={member?.user.id ?? ""} />
              </>
            )}
          </div>
          {may("edit:jobs") ? (
            <button type="submit" className="btn px-3 py-1">
              Assign
            </button>
          ) : !job.assignedTo ? (
            <button type="submit" className="btn px-3 py-1">
              Take this job
            </button>
          ) : job.assignedTo !== d.me ? (
            <p className="text-sm text-muted">A lead or the desk can hand it over.</p>
          ) : null}
        </Form>
        {job.hasPasscode ? (
          d.canRevealPasscode ? (
            <Form method="post" className="flex items-end gap-2">
              <input type="hidden" name="intent" value="reveal-passcode" />
              {passcode ? (
                <p className="text-sm">
                  Passcode: <code className="rounded bg-sunken px-2 py-1 font-mono">{passcode}</code>
                </p>
              ) : (
                <button type="submit" className="btn px-3 py-1">
                  Show device passcode
                </button>
              )}
            </Form>
          ) : (
            <p className="text-sm text-muted">
              A device passcode is held; only the assigned technician can see it.
            </p>
          )
        ) : null}
      </div>
      {job.state === "closed" && may("edit:jobs") ? (
        <Form method="post" className="mt-3">
          <input type="hidden" name="intent" value="comeback" />
          <button type="submit" className="btn">
            Open a warranty comeback
          </button>
        </Form>
      ) : null}
    </section>
  );
}

function Item({ term, children }: { term: string; children: React.ReactNode }) {
  return (
    <div>
      <dt className="text-muted">{term}</dt>
      <dd className="whitespace-pre-wrap">{children}</dd>
    </div>
  );
}

function WorkCard({ work, jobId }: { work: D["work"]; jobId: string }) {
  return (
    <section className="card" aria-labelledby="work-h">
      <h2 id="work-h" className="mb-3 font-semibold">
        Runs and findings
      </h2>
      {work.runs.length === 0 ? (
        <p className="text-sm text-muted">No diagnosis run on this job yet.</p>
      ) : (
        <>
          <ul className="flex flex-col gap-2 text-sm">
            {work.runs.map((r) => {
              const found = work.findings.filter((f) => f.runId === r.id);
              return (
                <li key={r.id} className="rounded border border-line p-2">
                  <Link className="link" to={`/runs/${r.id}`}>
                    Run of {new Date(r.startedAt).toISOString().slice(0, 16).replace("T", " ")}
                  </Link>{" "}
                  · {r.techName ?? "—"} · {r.status}
                  {r.outcome ? ` · ${r.outcome}` : ""}
                  {found.map((f) => (
                    <p key={f.id} className="text-muted">
                      Finding:{" "}
                      {f.kind === "no-fault-found"
                        ? "no fault found in this map"
                        : f.kind === "short"
                          ? `short on ${f.nodeLabel}`
                          : f.nodeLabel}
                      {f.fixLabel ? ` · fix: ${f.fixLabel}` : ""}
                      {f.outcome ? ` · ${f.outcome}` : ""}
                    </p>
                  ))}
                </li>
              );
            })}
          </ul>
          <p className="mt-3 text-sm">
            Parts used: {work.parts.length ? work.parts.join(", ") : "none recorded"} · Bench time:{" "}
            {work.minutes} min
          </p>
        </>
      )}
      <p className="sr-only">Job {jobId}</p>
    </section>
  );
}

function QuotesCard({ d, canEdit }: { d: D; canEdit: boolean }) {
  const { job } = d;
  return (
    <section className="card" aria-labelledby="quotes-h">
      <div className="mb-3 flex items-center justify-between">
        <h2 id="quotes-h" className="font-semibold">
          Quotes
        </h2>
        {canEdit && (job.state === "diagnosing" || job.state === "awaiting-approval") ? (
          <Link to={`/jobs/${job.id}/quote`} className="btn">
            Build a quote
          </Link>
        ) : null}
      </div>
      {d.quotes.length === 0 ? <p className="text-sm text-muted">No quote yet.</p> : null}
      {d.quotes.map((q) => (
        <div key={q.id} className="mb-4 last:mb-0">
          <h3 className="text-sm font-medium">
            Quote {q.number} · {q.status}
            {q.sentAt ? ` · sent ${new Date(q.sentAt).toISOString().slice(0, 10)}` : ""}
          </h3>
          <table className="mt-1 w-full text-sm">
            <thead className="text-muted">
              <tr>
                <th className="py-1 text-left font-medium">Line</th>
                <th className="py-1 text-right font-medium">Qty</th>
                <th className="py-1 text-right font-medium">Unit</th>
                <th className="py-1 text-right font-medium">Amount</th>
              </tr>
            </thead>
            <tbody>
              {q.lines.map((l) => (
                <tr key={l.id} className="border-t border-line">
                  <td className="py-1">
                    <span className="text-muted">{l.kind}</span> {l.description}
                  </td>
                  <td className="py-1 text-right font-mono">{l.quantity}</td>
                  <td className="py-1 text-right font-mono">{formatMoney(l.unitMinor, q.currency)}</td>
                  <td className="py-1 text-right font-mono">{formatMoney(l.totalMinor, q.currency)}</td>
                </tr>
              ))}
            </tbody>
            <tfoot className="font-mono">
              <tr className="border-t border-line">
                <td colSpan={3} className="py-1 text-right font-sans text-muted">
                  Subtotal
                </td>
                <td className="py-1 text-right">{formatMoney(q.subtotalMinor, q.currency)}</td>
              </tr>
              <tr>
                <td colSpan={3} className="py-1 text-right font-sans text-muted">
                  Tax {formatRate(q.taxRateBp)}
                </td>
                <td className="py-1 text-right">{formatMoney(q.taxMinor, q.currency)}</td>
              </tr>
              <tr>
                <td colSpan={3} className="py-1 text-right font-sans font-medium">
                  Total
                </td>
                <td className="py-1 text-right font-semibold">{formatMoney(q.totalMinor, q.currency)}</td>
              </tr>
            </tfoot>
          </table>
          {canEdit &&
          (q.status === "draft" || q.status === "sent") &&
          (job.state === "diagnosing" || job.state === "awaiting-approval") ? (
            <Form method="post" className="mt-2">
              <input type="hidden" name="intent" value="send-quote" />
              <input type="hidden" name="quoteId" value={q.id} />
              <button type="submit" className="btn btn-primary">
                {q.status === "sent" ? "Send the quote again" : "Send quote to customer"}
              </button>
            </Form>
          ) : null}
        </div>
      ))}
    </section>
  );
}

function CustomerCard({ d, canEmail }: { d: D; canEmail: boolean }) {
  const c = d.customer;
  const { can: may } = useMember();
  return (
    <section className="card" aria-labelledby="customer-h">
      <h2 id="customer-h" className="mb-2 font-semibold">
        Customer
      </h2>
      {!c ? (
        <p className="text-sm text-muted">No customer on this job.</p>
      ) : (
        <>
          <p className="font-medium">{c.name}</p>
          <p className="text-sm">{c.email ?? "no e-mail"}</p>
          <p className="text-sm">{c.phone ?? "no phone"}</p>
          <p className="text-sm text-muted">
            {c.consentToContact ? "Agreed to be contacted" : "Did not agree to be contacted"}
          </p>
          {may("manage:customers") ? (
            <Link className="link mt-1 inline-block text-sm" to={`/customers/${c.id}`}>
              Customer data (export, erase)
            </Link>
          ) : null}
          {canEmail && c.email && c.consentToContact && !c.erased ? (
            <div className="mt-3 flex flex-wrap gap-2 border-t border-line pt-3">
              {STATUS_UPDATES.map((k) => (
                <Form method="post" key={k}>
                  <input type="hidden" name="intent" value="email-update" />
                  <input type="hidden" name="kind" value={k} />
                  <button type="submit" className="btn px-3 py-1 text-xs">
                    E-mail “{STATUS_UPDATE_LABELS[k]}”
                  </button>
                </Form>
              ))}
            </div>
          ) : null}
        </>
      )}
    </section>
  );
}

function BillingCard({ d }: { d: D }) {
  const { can: may } = useMember();
  const actionData = useActionData<typeof action>();
  const navigation = useNavigation();
  const inv = d.invoice;
  const cur = inv?.currency ?? d.shop.currency;
  const err = (intent: string) =>
    actionData && !actionData.ok && actionData.intent === intent ? [actionData.message] : undefined;
  return (
    <section className="card" aria-labelledby="billing-h">
      <h2 id="billing-h" className="mb-2 font-semibold">
        Invoice and payments
      </h2>
      {!inv && d.owedQuote ? (
        <>
          <p className="text-sm">
            Quote {d.owedQuote.number} was approved ({formatMoney(d.owedQuote.totalMinor, cur)}) but has no
            invoice yet; the job cannot close until it is paid or waived.
          </p>
          {may("manage:payments") ? (
            <Form method="post" className="mt-2">
              <input type="hidden" name="intent" value="raise-invoice" />
              <button type="submit" className="btn btn-primary px-3 py-1">
                Raise the invoice from quote {d.owedQuote.number}
              </button>
            </Form>
          ) : null}
          <FieldErrors errors={err("raise-invoice")} />
        </>
      ) : !inv ? (
        <>
          <p className="text-sm text-muted">
            {d.job.chargeable
              ? "No invoice yet. Approving a quote raises one."
              : "Warranty work: nothing to invoice."}
          </p>
          {d.job.chargeable &&
          d.job.diagnosticFeeMinor > 0 &&
          may("manage:payments") &&
          d.job.state !== "closed" ? (
            <Form method="post" className="mt-2">
              <input type="hidden" name="intent" value="raise-invoice" />
              <button type="submit" className="btn px-3 py-1">
                Bill the diagnostic fee only ({formatMoney(d.job.diagnosticFeeMinor, cur)} + tax)
              </button>
            </Form>
          ) : null}
        </>
      ) : (
        <>
          <p className="text-sm">
            Invoice {inv.number}:{" "}
            <strong data-testid="invoice-status">{inv.status === "paid" ? "Paid" : "Open"}</strong>
          </p>
          <p className="font-mono text-sm">
            {formatMoney(inv.paidMinor, cur)} of {formatMoney(inv.totalMinor, cur)} paid
            {inv.refundedMinor ? ` · ${formatMoney(inv.refundedMinor, cur)} refunded` : ""}
          </p>
          {d.payments.length ? (
            <ul className="mt-2 text-sm">
              {d.payments.map((p) => (
                <li key={p.id} className="flex flex-wrap items-center gap-2 border-t border-line py-1">
                  <span>
                    {p.kind} · {p.method} · {p.status} ·{" "}
                    <span className="font-mono">{formatMoney(p.amountMinor, cur)}</span>
                  </span>
                  {may("refund:payments") && p.kind !== "refund" && p.status === "succeeded" ? (
                    <Form method="post" className="ml-auto flex items-center gap-1">
                      <input type="hidden" name="intent" value="refund" />
                      <input type="hidden" name="paymentId" value={p.id} />
                      <label className="sr-only" htmlFor={`refund-${p.id}`}>
                        Refund amount
                      </label>
                      <input
                        id={`refund-${p.id}`}
                        name="amount"
                        defaultValue={minorToInput(p.amountMinor, cur)}
                        className="field-input w-24 py-1"
                      />
                      <button type="submit" className="btn px-2 py-1 text-xs">
                        Refund
                      </button>
                    </Form>
                  ) : null}
                </li>
              ))}
            </ul>
          ) : null}
          <FieldErrors errors={err("refund")} />
          {inv.balanceMinor > 0 && may("manage:payments") ? (
            <div className="mt-3 flex flex-col gap-3 border-t border-line pt-3">
              <Form method="post" className="flex flex-wrap items-end gap-2">
                <input type="hidden" name="intent" value="counter-payment" />
                <input type="hidden" name="idempotencyKey" value={d.counterKey} />
                <div className="flex flex-col gap-1">
                  <label htmlFor="counter-amount" className="text-sm font-medium">
                    Taken at the counter
                  </label>
                  <input
                    id="counter-amount"
                    name="amount"
                    defaultValue={minorToInput(inv.balanceMinor, cur)}
                    className="field-input w-28"
                  />
                </div>
                <label className="sr-only" htmlFor="counter-method">
                  Method
                </label>
                <select id="counter-method" name="method" className="field-input w-36">
                  <option value="cash">Cash</option>
                  <option value="card-terminal">Card terminal</option>
                </select>
                <button type="submit" className="btn" disabled={navigation.state === "submitting"}>
                  Record payment
                </button>
              </Form>
              <FieldErrors errors={err("counter-payment")} />
              {d.onlinePayments ? (
                <Form method="post" className="flex flex-wrap items-end gap-2">
                  <input type="hidden" name="intent" value="online-payment" />
                  <div className="flex flex-col gap-1">
                    <label htmlFor="online-amount" className="text-sm font-medium">
                      Online payment or deposit
                    </label>
                    <input
                      id="online-amount"
                      name="amount"
                      defaultValue={minorToInput(inv.balanceMinor, cur)}
                      className="field-input w-28"
                    />
                  </div>
                  <button type="submit" className="btn">
                    Create payment link
                  </button>
                </Form>
              ) : null}
              <FieldErrors errors={err("online-payment")} />
              {actionData?.ok && "checkoutUrl" in actionData ? (
                <p className="text-sm">
                  Payment link:{" "}
                  <a className="link break-all" href={actionData.checkoutUrl}>
                    {actionData.checkoutUrl}
                  </a>
                </p>
              ) : null}
            </div>
          ) : null}
        </>
      )}
      {d.job.waivedAt ? (
        <p className="mt-2 text-sm">Charge waived by the owner: {d.job.waiverReason}</p>
      ) : may("waive:invoice") && d.billing === "unpaid" && d.job.state !== "closed" ? (
        <Form method="post" className="mt-3 flex flex-wrap items-end gap-2 border-t border-line pt-3">
          <input type="hidden" name="intent" value="waive" />
          <div className="flex flex-1 flex-col gap-1">
            <label htmlFor="waive-reason" className="text-sm font-medium">
              Waive the charge (owner)
            </label>
            <input id="waive-reason" name="reason" className="field-input" placeholder="Why" />
          </div>
          <button type="submit" className="btn btn-danger">
            Record waiver
          </button>
          <FieldErrors errors={err("waive")} />
        </Form>
      ) : null}
    </section>
  );
}

function Timeline({ events }: { events: D["events"] }) {
  return (
    <section className="card" aria-labelledby="timeline-h">
      <h2 id="timeline-h" className="mb-2 font-semibold">
        History
      </h2>
      <ol className="flex flex-col gap-2 text-sm">
        {events.map((e) => (
          <li key={e.id}>
            <span className="font-medium">{JOB_STATE_LABELS[e.toState]}</span>
            <span className="text-muted">
              {" "}
              · {e.actorKind === "customer" ? "the customer" : (e.actorName ?? "system")} ·{" "}
              {new Date(e.at).toISOString().slice(0, 16).replace("T", " ")}
            </span>
            {e.note ? <p className="text-muted">{e.note}</p> : null}
          </li>
        ))}
      </ol>
    </section>
  );
}

export const meta: Route.MetaFunction = ({ data: d }) => [
  { title: d ? `Job #${d.job.number} · Railwise` : "Job · Railwise" },
];
