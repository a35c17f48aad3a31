import { and, eq } from "drizzle-orm";
import { useEffect } from "react";
import { data, Form, useNavigation } from "react-router";
import { LogoMark } from "~/components/logo";
import { formatMoney, formatRate } from "~/lib/money";
import { db } from "~/server/db.server";
import { appUrl } from "~/server/email.server";
import { decideQuote, getCustomer } from "~/server/jobs.server";
import { createCheckout, PaymentsOffError, paymentsMode } from "~/server/payments.server";
import { balanceOf, currentInvoice, findQuoteByToken, jobOfQuote, linesOf } from "~/server/quotes.server";
import { boards, shops } from "~/server/schema.server";
import { redirectWithToast } from "~/server/toast.server";
import type { Route } from "./+types/quote-public";

// The customer's page, reached from the quote e-mail without signing in. The link's token is the only key:
// 160 random bits, stored hashed, valid for QUOTE_LINK_DAYS; it shows this one quote and nothing else.

async function load(token: string) {
  const found = await findQuoteByToken(token);
  if (!found.ok) throw new Response(found.message, { status: found.status });
  const quote = found.quote;
  const job = (await jobOfQuote(quote))!;
  const shop = (await db.select().from(shops).where(eq(shops.id, quote.shopId)).get())!;
  return { quote, job, shop };
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const { quote, job, shop } = await load(params.token);
  const [lines, board, invoice, customer] = await Promise.all([
    linesOf(shop.id, quote.id),
    job.boardId
      ? db
          .select()
          .from(boards)
          .where(and(eq(boards.shopId, shop.id), eq(boards.id, job.boardId)))
          .get()
      : undefined,
    currentInvoice(shop.id, job.id),
    getCustomer(shop.id, job.customerId),
  ]);
  const paidReturn = new URL(request.url).searchParams.get("paid") === "1";
  return {
    shop: { name: shop.name, currency: quote.currency },
    customerName: customer?.name ?? "",
    job: {
      number: job.number,
      device: board ? `${board.maker} ${board.model}` : "your device",
      state: job.state,
    },
    quote: {
      number: quote.number,
      status: quote.status,
      subtotalMinor: quote.subtotalMinor,
      taxMinor: quote.taxMinor,
      totalMinor: quote.totalMinor,
      taxRateBp: quote.taxRateBp,
      depositMinor: quote.depositMinor,
      note: quote.note,
      expiresAt: quote.expiresAt?.getTime() ?? null,
    },
    lines: lines.map((l) => ({
      id: l.id,
      kind: l.kind,
      description: l.description,
      quantity: l.quantity,
      unitMinor: l.unitMinor,
      totalMinor: l.totalMinor,
    })),
    invoice: invoice
      ? {
          number: invoice.number,
          status: invoice.status,
          totalMinor: invoice.totalMinor,
          paidMinor: invoice.paidMinor,
          balanceMinor: balanceOf(invoice),
        }
      : null,
    canPayOnline: paymentsMode() !== "off",
    paidReturn,
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { quote, job, shop } = await load(params.token);
  const form = await request.formData();
  const intent = form.get("intent");
  const here = `/q/${params.token}`;

  if (intent === "approve" || intent === "decline") {
    if (quote.status !== "sent")
      return data({ message: "This quote has already been answered." }, { status: 409 });
    const moved = await decideQuote(shop, job, quote, intent === "approve" ? "approved" : "declined", {
      kind: "customer",
    });
    if (!moved.ok)
      return data(
        { message: "This quote can no longer be answered here. Please contact the shop." },
        { status: 409 },
      );
    return redirectWithToast(here, {
      kind: "success",
      message:
        intent === "approve"
          ? "Thank you: the repair is approved."
          : "Understood: the device will be returned unrepaired.",
    });
  }

  if (intent === "pay") {
    const invoice = await currentInvoice(shop.id, job.id);
    if (!invoice || balanceOf(invoice) === 0)
      return data({ message: "Nothing is due on this job." }, { status: 409 });
    const balance = balanceOf(invoice);
    const depositDue = quote.depositMinor > 0 && invoice.paidMinor === 0 && form.get("amount") === "deposit";
    const amountMinor = depositDue ? Math.min(quote.depositMinor, balance) : balance;
    const customer = await getCustomer(shop.id, job.customerId);
    try {
      const checkout = await createCheckout({
        shop,
        invoice,
        jobNumber: job.number,
        amountMinor,
        kind: amountMinor < balance ? "deposit" : "payment",
        customerEmail: customer?.email ?? null,
        successUrl: appUrl(request, `${here}?paid=1`),
        cancelUrl: appUrl(request, here),
        actorId: null,
      });
      return { checkoutUrl: checkout.url };
    } catch (error) {
      if (error instanceof PaymentsOffError)
        return data({ message: "Online payment is not available. Please pay at the shop." }, { status: 503 });
      throw error;
    }
  }
  return data({ message: "Unknown action." }, { status: 400 });
}

export default function QuotePublicRoute({ loaderData, actionData }: Route.ComponentProps) {
  const { shop, job, quote, lines, invoice, customerName, canPayOnline, paidReturn } = loaderData;
  const navigation = useNavigation();
  const busy = navigation.state !== "idle";
  const checkoutUrl = actionData && "checkoutUrl" in actionData ? actionData.checkoutUrl : null;
  const message = actionData && "message" in actionData ? actionData.message : null;
  // The hosted payment page is on the provider's site: go there by navigation (the page's form-action policy
  // keeps form posts on this site), with a plain link as the fallback.
  useEffect(() => {
    if (checkoutUrl) window.location.assign(checkoutUrl);
  }, [checkoutUrl]);
  const m = (minor: number) => formatMoney(minor, shop.currency);
  return (
    <main className="mx-auto max-w-2xl px-4 py-8">
      <header className="mb-6 flex items-center gap-3">
        <LogoMark className="h-8 w-8" />
        <div>
          <p className="font-semibold">{shop.name}</p>
          <p className="text-sm text-muted">
            Repair quote {quote.number} · job #{job.number}
          </p>
        </div>
      </header>
      <section className="card">
        <h1 className="text-xl font-semibold">
          {customerName ? `${customerName}, here` : "Here"} is the quote for {job.device}
        </h1>
        {quote.note ? <p className="mt-2 text-sm">{quote.note}</p> : null}
        <table className="mt-4 w-full text-sm">
          <thead className="text-muted">
            <tr>
              <th className="py-1 text-left font-medium">Item</th>
              <th className="py-1 text-right font-medium">Qty</th>
              <th className="py-1 text-right font-medium">Amount</th>
            </tr>
          </thead>
          <tbody>
            {lines.map((l) => (
              <tr key={l.id} className="border-t border-line">
                <td className="py-1">{l.description}</td>
                <td className="py-1 text-right font-mono">{l.quantity}</td>
                <td className="py-1 text-right font-mono">{m(l.totalMinor)}</td>
              </tr>
            ))}
          </tbody>
          <tfoot className="font-mono">
            <tr className="border-t border-line">
              <td colSpan={2} className="py-1 text-right font-sans text-muted">
                Subtotal
              </td>
              <td className="py-1 text-right">{m(quote.subtotalMinor)}</td>
            </tr>
            <tr>
              <td colSpan={2} className="py-1 text-right font-sans text-muted">
                Tax {formatRate(quote.taxRateBp)}
              </td>
              <td className="py-1 text-right">{m(quote.taxMinor)}</td>
            </tr>
            <tr>
              <td colSpan={2} className="py-1 text-right font-sans font-semibold">
                Total
              </td>
              <td className="py-1 text-right font-semibold">{m(quote.totalMinor)}</td>
            </tr>
          </tfoot>
        </table>
        {message ? (
          <p role="alert" className="mt-4 rounded-md border border-bad bg-bad-soft px-3 py-2 text-sm">
            {message}
          </p>
        ) : null}
        {quote.status === "sent" ? (
          <div className="mt-6 flex flex-wrap items-center gap-3">
            <Form method="post">
              <input type="hidden" name="intent" value="approve" />
              <button type="submit" className="btn btn-primary" disabled={busy}>
                Approve the repair
              </button>
            </Form>
            <Form method="post">
              <input type="hidden" name="intent" value="decline" />
              <button type="submit" className="btn" disabled={busy}>
                Decline, return my device
              </button>
            </Form>
            {quote.expiresAt ? (
              <p className="text-xs text-muted">
                This link works until {new Date(quote.expiresAt).toISOString().slice(0, 10)}.
              </p>
            ) : null}
          </div>
        ) : (
          <p className="mt-6 font-medium">
            {quote.status === "approved"
              ? "You approved this repair."
              : "You declined this quote; the device will be returned unrepaired."}
          </p>
        )}
      </section>
      {invoice ? (
        <section className="card mt-6" aria-labelledby="pay-h">
          <h2 id="pay-h" className="font-semibold">
            Invoice {invoice.number}
          </h2>
          <p className="mt-1 text-sm" data-testid="public-invoice-status">
            {invoice.status === "paid"
              ? `Paid in full (${m(invoice.paidMinor)}). Thank you.`
              : `${m(invoice.paidMinor)} paid of ${m(invoice.totalMinor)}; ${m(invoice.balanceMinor)} to pay.`}
          </p>
          {paidReturn && invoice.status !== "paid" ? (
            <p className="mt-1 text-sm text-muted">Your payment is being confirmed; reload in a moment.</p>
          ) : null}
          {invoice.balanceMinor > 0 && canPayOnline ? (
            <div className="mt-3 flex flex-wrap gap-2">
              <Form method="post">
                <input type="hidden" name="intent" value="pay" />
                <button type="submit" className="btn btn-primary" disabled={busy}>
                  Pay {m(invoice.balanceMinor)} now
                </button>
              </Form>
              {quote.depositMinor > 0 &&
              invoice.paidMinor === 0 &&
              quote.depositMinor < invoice.balanceMinor ? (
                <Form method="post">
                  <input type="hidden" name="intent" value="pay" />
                  <input type="hidden" name="amount" value="deposit" />
                  <button type="submit" className="btn" disabled={busy}>
                    Pay the {m(quote.depositMinor)} deposit
                  </button>
                </Form>
              ) : null}
            </div>
          ) : null}
          {checkoutUrl ? (
            <p className="mt-2 text-sm">
              Going to the payment page…{" "}
              <a className="link" href={checkoutUrl}>
                Continue to payment
              </a>
            </p>
          ) : null}
          <p className="mt-3 text-xs text-muted">
            You can also pay at the counter when you collect the device.
          </p>
        </section>
      ) : null}
    </main>
  );
}

export const meta: Route.MetaFunction = () => [
  { title: "Your repair quote" },
  { name: "robots", content: "noindex" },
];

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  const text =
    typeof (error as { data?: unknown })?.data === "string" ? (error as { data: string }).data : null;
  return (
    <main className="mx-auto max-w-xl p-10">
      <h1 className="text-2xl font-semibold">This quote cannot be shown</h1>
      <p className="mt-2 text-muted">{text ?? "The link is not valid. Please contact the shop."}</p>
    </main>
  );
}
