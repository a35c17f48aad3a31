import { parseWithZod } from "@conform-to/zod/v4";
import { and, desc, eq, inArray } from "drizzle-orm";
import { useState } from "react";
import { data, Form, Link, useNavigation } from "react-router";
import { z } from "zod";
import { FieldErrors } from "~/components/field";
import { PageHeader } from "~/components/page-header";
import { formatMoney, formatRate, minorToInput, parseMoney, totalsOf } from "~/lib/money";
import { requireMember } from "~/server/auth.server";
import { db } from "~/server/db.server";
import { describeFindings, getJob } from "~/server/jobs.server";
import { createQuote, type QuoteLineInput } from "~/server/quotes.server";
import { findings, runs } from "~/server/schema.server";
import { redirectWithToast } from "~/server/toast.server";
import type { Route } from "./+types/job-quote";

const ROWS = 8;
const DEFAULT_LABOUR_MINOR = 8500;

async function latestFinding(shopId: string, jobId: string) {
  const jobRuns = await db
    .select({ id: runs.id })
    .from(runs)
    .where(and(eq(runs.shopId, shopId), eq(runs.jobId, jobId)))
    .all();
  if (!jobRuns.length) return undefined;
  return db
    .select()
    .from(findings)
    .where(
      and(
        eq(findings.shopId, shopId),
        inArray(
          findings.runId,
          jobRuns.map((r) => r.id),
        ),
      ),
    )
    .orderBy(desc(findings.createdAt))
    .get();
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const { shop } = await requireMember(request, { permission: "edit:jobs" });
  const job = await getJob(shop.id, params.jobId);
  if (!job) throw new Response("That job was not found in your shop.", { status: 404 });
  const latest = await latestFinding(shop.id, job.id);
  const finding = latest ? (await describeFindings(shop.id, [latest]))[0] : undefined;
  // Start from the finding: each part its fix used, a line for the fix itself, bench labour and the agreed fee.
  const lines: Array<{ kind: string; description: string; quantity: string; unitPrice: string }> = [];
  for (const part of finding?.partsUsed ?? [])
    lines.push({ kind: "part", description: part, quantity: "1", unitPrice: "" });
  if (finding && finding.kind !== "no-fault-found" && !finding.partsUsed?.length) {
    lines.push({
      kind: "part",
      description: `${finding.kind === "short" ? "Clear short on" : "Replace"} ${finding.nodeLabel ?? "faulty part"}`,
      quantity: "1",
      unitPrice: "",
    });
  }
  lines.push({
    kind: "labour",
    description: finding?.fixLabel ? `Bench labour: ${finding.fixLabel}` : "Bench labour",
    quantity: "1",
    unitPrice: minorToInput(DEFAULT_LABOUR_MINOR, shop.currency),
  });
  if (job.chargeable && job.diagnosticFeeMinor > 0) {
    lines.push({
      kind: "fee",
      description: "Diagnostic fee (agreed at intake)",
      quantity: "1",
      unitPrice: minorToInput(job.diagnosticFeeMinor, shop.currency),
    });
  }
  return {
    job: { id: job.id, number: job.number, state: job.state, chargeable: job.chargeable },
    shop: { currency: shop.currency, taxRateBp: shop.taxRateBp },
    finding: finding
      ? { id: finding.id, kind: finding.kind, nodeLabel: finding.nodeLabel, fixLabel: finding.fixLabel }
      : null,
    lines,
  };
}

const LineSchema = z.object({
  kind: z.enum(["part", "labour", "fee"]).optional(),
  description: z.string().trim().max(200, "At most 200 characters.").optional(),
  quantity: z.string().optional(),
  unitPrice: z.string().optional(),
});

export const QuoteSchema = z.object({
  lines: z.array(LineSchema).max(ROWS).default([]),
  deposit: z.string().optional(),
  note: z.string().trim().max(1000).optional(),
  findingId: z.string().optional(),
});

export async function action({ request, params }: Route.ActionArgs) {
  const { shop, user } = await requireMember(request, { permission: "edit:jobs" });
  const job = await getJob(shop.id, params.jobId);
  if (!job) throw new Response("That job was not found in your shop.", { status: 404 });
  const submission = parseWithZod(await request.formData(), { schema: QuoteSchema });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  if (job.state !== "diagnosing" && job.state !== "awaiting-approval") {
    return data(
      {
        result: submission.reply({
          formErrors: ["A quote is built while the job is being diagnosed or awaits approval."],
        }),
      },
      { status: 409 },
    );
  }
  const errors: Record<string, string[]> = {};
  const lines: QuoteLineInput[] = [];
  submission.value.lines.forEach((l, i) => {
    if (!l.description && !l.unitPrice) return; // an empty row
    if (!l.description) errors[`lines[${i}].description`] = ["Describe the line."];
    const qty = Number(l.quantity ?? "1");
    if (!Number.isInteger(qty) || qty < 1 || qty > 999)
      errors[`lines[${i}].quantity`] = ["A whole number from 1 to 999."];
    const price = parseMoney(l.unitPrice ?? "", shop.currency);
    if (!price.ok) errors[`lines[${i}].unitPrice`] = [price.message];
    if (l.description && price.ok && Number.isInteger(qty) && qty >= 1) {
      lines.push({
        kind: l.kind ?? "part",
        description: l.description,
        quantity: qty,
        unitMinor: price.minor,
      });
    }
  });
  const deposit = submission.value.deposit
    ? parseMoney(submission.value.deposit, shop.currency)
    : { ok: true as const, minor: 0 };
  if (!deposit.ok) errors.deposit = [deposit.message];
  if (!lines.length && !Object.keys(errors).length) errors[""] = ["Add at least one line."];
  if (Object.keys(errors).length) {
    const { "": formErrors, ...fieldErrors } = errors;
    return data({ result: submission.reply({ formErrors, fieldErrors }) }, { status: 400 });
  }
  const quote = await createQuote(shop, job.id, user.id, {
    lines: job.chargeable ? lines : lines.map((l) => ({ ...l, unitMinor: 0 })),
    depositMinor: deposit.ok ? deposit.minor : 0,
    note: submission.value.note ?? "",
    findingId: submission.value.findingId || null,
  });
  return redirectWithToast(`/jobs/${job.id}`, {
    kind: "success",
    message: `Quote ${quote.number} saved: ${formatMoney(quote.totalMinor, shop.currency)}. Send it to the customer when ready.`,
  });
}

export default function JobQuoteRoute({ loaderData, actionData }: Route.ComponentProps) {
  const { job, shop, finding, lines } = loaderData;
  const navigation = useNavigation();
  const errors = (actionData?.result as { error?: Record<string, string[] | null> } | undefined)?.error ?? {};
  const rows = Array.from(
    { length: ROWS },
    (_, i) => lines[i] ?? { kind: "part", description: "", quantity: "1", unitPrice: "" },
  );
  const [preview, setPreview] = useState(() => previewOf(rows, shop.currency, shop.taxRateBp));
  const readForm = (form: HTMLFormElement) => {
    const fd = new FormData(form);
    const current = rows.map((_, i) => ({
      description: String(fd.get(`lines[${i}].description`) ?? ""),
      quantity: String(fd.get(`lines[${i}].quantity`) ?? ""),
      unitPrice: String(fd.get(`lines[${i}].unitPrice`) ?? ""),
    }));
    setPreview(previewOf(current, shop.currency, shop.taxRateBp));
  };
  return (
    <>
      <PageHeader
        title={`Quote for job #${job.number}`}
        subtitle={`Prices before tax (${shop.currency}); tax ${formatRate(shop.taxRateBp)} is added on the subtotal.`}
        actions={
          <Link to={`/jobs/${job.id}`} className="btn">
            Back to the job
          </Link>
        }
      />
      {finding ? (
        <p className="mb-4 text-sm text-muted">
          Built from the latest finding:{" "}
          {finding.kind === "no-fault-found" ? "no fault found" : finding.nodeLabel}
          {finding.fixLabel ? ` · fix: ${finding.fixLabel}` : ""}. Fill in the part prices.
        </p>
      ) : (
        <p className="mb-4 text-sm text-muted">No finding on this job yet: enter the lines by hand.</p>
      )}
      {!job.chargeable ? (
        <p className="mb-4 text-sm">Warranty comeback: every line is free of charge.</p>
      ) : null}
      <Form method="post" className="card flex flex-col gap-3" onChange={(e) => readForm(e.currentTarget)}>
        <input type="hidden" name="findingId" value={finding?.id ?? ""} />
        <FieldErrors errors={errors[""] ?? undefined} />
        <table className="w-full text-sm">
          <thead className="text-muted">
            <tr>
              <th className="py-1 text-left font-medium">Kind</th>
              <th className="py-1 text-left font-medium">Description</th>
              <th className="py-1 text-left font-medium">Qty</th>
              <th className="py-1 text-left font-medium">Unit price</th>
            </tr>
          </thead>
          <tbody>
            {rows.map((r, i) => (
              <tr key={i} className="align-top">
                <td className="w-32 py-1 pr-2">
                  <label className="sr-only" htmlFor={`kind-${i}`}>
                    Line {i + 1} kind
                  </label>
                  <select
                    id={`kind-${i}`}
                    name={`lines[${i}].kind`}
                    defaultValue={r.kind}
                    className="field-input"
                  >
                    <option value="part">Part</option>
                    <option value="labour">Labour</option>
                    <option value="fee">Fee</option>
                  </select>
                </td>
                <td className="py-1 pr-2">
                  <label className="sr-only" htmlFor={`desc-${i}`}>
                    Line {i + 1} description
                  </label>
                  <input
                    id={`desc-${i}`}
                    name={`lines[${i}].description`}
                    defaultValue={r.description}
                    className="field-input"
                  />
                  <FieldErrors errors={errors[`lines[${i}].description`] ?? undefined} />
                </td>
                <td className="w-20 py-1 pr-2">
                  <label className="sr-only" htmlFor={`qty-${i}`}>
                    Line {i + 1} quantity
                  </label>
                  <input
                    id={`qty-${i}`}
                    name={`lines[${i}].quantity`}
                    defaultValue={r.quantity}
                    inputMode="numeric"
                    className="field-input"
                  />
                  <FieldErrors errors={errors[`lines[${i}].quantity`] ?? undefined} />
                </td>
                <td className="w-32 py-1">
                  <label className="sr-only" htmlFor={`price-${i}`}>
                    Line {i + 1} unit price
                  </label>
                  <input
                    id={`price-${i}`}
                    name={`lines[${i}].unitPrice`}
                    defaultValue={r.unitPrice}
                    inputMode="decimal"
                    className="field-input"
                  />
                  <FieldErrors errors={errors[`lines[${i}].unitPrice`] ?? undefined} />
                </td>
              </tr>
            ))}
          </tbody>
        </table>
        <p className="self-end font-mono text-sm" aria-live="polite" data-testid="quote-preview">
          {preview
            ? `Subtotal ${formatMoney(preview.subtotalMinor, shop.currency)} · tax ${formatMoney(preview.taxMinor, shop.currency)} · total ${formatMoney(preview.totalMinor, shop.currency)}`
            : "Enter each price as digits (e.g. 12.50) to see the total."}
        </p>
        <div className="flex flex-wrap gap-4">
          <div className="flex flex-col gap-1">
            <label htmlFor="deposit" className="text-sm font-medium">
              Deposit asked on approval (optional)
            </label>
            <input id="deposit" name="deposit" className="field-input w-32" inputMode="decimal" />
            <FieldErrors errors={errors.deposit ?? undefined} />
          </div>
          <div className="flex flex-1 flex-col gap-1">
            <label htmlFor="note" className="text-sm font-medium">
              Note to the customer (optional)
            </label>
            <input id="note" name="note" className="field-input" />
          </div>
        </div>
        <button
          type="submit"
          className="btn btn-primary self-start"
          disabled={navigation.state === "submitting"}
        >
          Save quote
        </button>
      </Form>
    </>
  );
}

/** The running total as typed (the server computes the quote again from what is submitted). */
function previewOf(
  rows: Array<{ description: string; quantity: string; unitPrice: string }>,
  currency: string,
  taxRateBp: number,
) {
  const lines = [];
  for (const r of rows) {
    if (!r.description && !r.unitPrice) continue;
    const price = parseMoney(r.unitPrice, currency);
    const quantity = Number(r.quantity || "1");
    if (!price.ok || !Number.isInteger(quantity) || quantity < 1) return null;
    lines.push({ quantity, unitMinor: price.minor });
  }
  return totalsOf(lines, taxRateBp);
}

export const meta: Route.MetaFunction = () => [{ title: "Quote · Railwise" }];
