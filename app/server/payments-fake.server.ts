import { randomBytes } from "node:crypto";
import http from "node:http";
import type { AddressInfo } from "node:net";
import qs from "qs";
import Stripe from "stripe";
import { minorDigits } from "~/lib/money";

// A local stand-in for the hosted payment provider, so development and tests run the whole path on one
// machine with no account. It answers the same endpoints the product calls through the official SDK
// (checkout sessions create/retrieve/expire, refunds), serves a page where the customer presses "Pay",
// and then posts a webhook signed with the provider's own scheme (the SDK's generateTestHeaderString).
// Never used in production: payments.server.ts starts it only when no real key is configured.

type Session = {
  id: string;
  object: "checkout.session";
  mode: string;
  status: "open" | "complete" | "expired";
  payment_status: "unpaid" | "paid";
  amount_total: number;
  amount_subtotal: number;
  currency: string;
  customer_email: string | null;
  client_reference_id: string | null;
  metadata: Record<string, string>;
  payment_intent: string | null;
  success_url: string;
  cancel_url: string | null;
  url: string;
  created: number;
  expires_at: number;
  livemode: false;
  line_items_description: string;
};

type Intent = {
  id: string;
  object: "payment_intent";
  amount: number;
  amount_refunded: number;
  currency: string;
  status: string;
};

export type PaymentsFake = {
  port: number;
  baseUrl: string;
  close: () => Promise<void>;
  /** Every event the fake signed and tried to deliver, newest last (tests replay them). */
  delivered: Array<{ payload: string; header: string; status: number | null }>;
};

export type PaymentsFakeOptions = {
  port: number;
  host?: string;
  apiKey: string;
  webhookSecret: string;
  webhookUrl: () => string;
};

const rid = (prefix: string) => `${prefix}_${randomBytes(12).toString("hex")}`;
const nowSeconds = () => Math.floor(Date.now() / 1000);

function stripeError(
  res: http.ServerResponse,
  status: number,
  message: string,
  type = "invalid_request_error",
) {
  res.writeHead(status, { "Content-Type": "application/json" });
  res.end(JSON.stringify({ error: { type, message } }));
}

function json(res: http.ServerResponse, body: unknown) {
  res.writeHead(200, { "Content-Type": "application/json", "Request-Id": rid("req") });
  res.end(JSON.stringify(body));
}

function readBody(req: http.IncomingMessage): Promise<string> {
  return new Promise((resolve, reject) => {
    let size = 0;
    const chunks: Buffer[] = [];
    req.on("data", (c: Buffer) => {
      size += c.length;
      if (size > 1_000_000) reject(new Error("body too large"));
      else chunks.push(c);
    });
    req.on("end", () => resolve(Buffer.concat(chunks).toString("utf8")));
    req.on("error", reject);
  });
}

const escapeHtml = (s: string) =>
  s.replace(/[&<>"']/g, (c) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" })[c]!);

function payPage(session: Session, message?: string) {
  const currency = session.currency.toUpperCase();
  const amount = new Intl.NumberFormat("en-US", { style: "currency", currency }).format(
    session.amount_total / 10 ** minorDigits(currency),
  );
  const done = session.status !== "open";
  return `<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width,initial-scale=1">
<title>Test checkout</title>
<style>body{font-family:system-ui,sans-serif;background:#f4f4f5;color:#18181b;margin:0;padding:2rem}
main{max-width:28rem;margin:auto;background:#fff;border:1px solid #d4d4d8;border-radius:.5rem;padding:1.5rem}
.note{background:#fef3c7;border:1px solid #d97706;padding:.5rem;border-radius:.25rem;font-size:.85rem}
button{font-size:1rem;padding:.6rem 1.4rem;border-radius:.35rem;border:1px solid #1d4ed8;background:#1d4ed8;color:#fff;cursor:pointer}
a{color:#1d4ed8}</style></head><body><main>
<p class="note">Local test checkout. No card is charged and no money moves.</p>
<h1>Pay ${escapeHtml(amount)}</h1>
<p>${escapeHtml(session.line_items_description)}</p>
${session.customer_email ? `<p>Receipt to ${escapeHtml(session.customer_email)}</p>` : ""}
${message ? `<p role="alert">${escapeHtml(message)}</p>` : ""}
${
  done
    ? `<p>This checkout is ${session.status === "complete" ? "paid" : "expired"}.</p>`
    : `<form method="post"><button type="submit">Pay</button></form>${
        session.cancel_url ? `<p><a href="${escapeHtml(session.cancel_url)}">Cancel and go back</a></p>` : ""
      }`
}
</main></body></html>`;
}

export async function startPaymentsFake(options: PaymentsFakeOptions): Promise<PaymentsFake> {
  const host = options.host ?? "127.0.0.1";
  const sessions = new Map<string, Session>();
  const intents = new Map<string, Intent>();
  const delivered: PaymentsFake["delivered"] = [];
  const signer = new Stripe(options.apiKey, { telemetry: false });
  let baseUrl = "";

  async function deliver(type: string, object: unknown) {
    const event = {
      id: rid("evt"),
      object: "event",
      api_version: null,
      created: nowSeconds(),
      livemode: false,
      pending_webhooks: 1,
      request: { id: null, idempotency_key: null },
      type,
      data: { object },
    };
    const payload = JSON.stringify(event);
    const header = signer.webhooks.generateTestHeaderString({ payload, secret: options.webhookSecret });
    const record = { payload, header, status: null as number | null };
    delivered.push(record);
    // A few quick attempts; the real provider keeps retrying for days.
    for (let attempt = 0; attempt < 3; attempt++) {
      try {
        const res = await fetch(options.webhookUrl(), {
          method: "POST",
          headers: { "Content-Type": "application/json", "Stripe-Signature": header },
          body: payload,
        });
        record.status = res.status;
        if (res.ok) return;
      } catch {
        record.status = null;
      }
      await new Promise((r) => setTimeout(r, 200 * (attempt + 1)));
    }
    console.warn(
      `payments fake: webhook ${type} was not accepted (last status ${record.status ?? "no answer"})`,
    );
  }

  function authorised(req: http.IncomingMessage) {
    return req.headers.authorization === `Bearer ${options.apiKey}`;
  }

  async function handle(req: http.IncomingMessage, res: http.ServerResponse) {
    const url = new URL(req.url ?? "/", baseUrl);
    const parts = url.pathname.split("/").filter(Boolean);
    const method = req.method ?? "GET";

    if (parts[0] === "v1") {
      if (!authorised(req)) return stripeError(res, 401, "Invalid API key provided.", "authentication_error");
      const body = method === "POST" ? (qs.parse(await readBody(req)) as Record<string, unknown>) : {};

      if (parts[1] === "checkout" && parts[2] === "sessions") {
        if (method === "POST" && parts.length === 3) return json(res, createSession(body));
        const session = sessions.get(parts[3] ?? "");
        if (!session) return stripeError(res, 404, `No such checkout.session: '${parts[3]}'`);
        if (method === "GET" && parts.length === 4) return json(res, session);
        if (method === "POST" && parts[4] === "expire") {
          if (session.status !== "open") return stripeError(res, 400, "Only open sessions can be expired.");
          session.status = "expired";
          return json(res, session);
        }
      }
      if (parts[1] === "payment_intents" && method === "GET" && parts[2]) {
        const intent = intents.get(parts[2]);
        return intent ? json(res, intent) : stripeError(res, 404, `No such payment_intent: '${parts[2]}'`);
      }
      if (parts[1] === "refunds" && method === "POST" && parts.length === 2) {
        const intent = intents.get(String(body.payment_intent ?? ""));
        if (!intent) return stripeError(res, 400, `No such payment_intent: '${body.payment_intent}'`);
        const remaining = intent.amount - intent.amount_refunded;
        const amount = body.amount === undefined ? remaining : Number(body.amount);
        if (!Number.isInteger(amount) || amount <= 0 || amount > remaining) {
          return stripeError(res, 400, `Refund amount must be between 1 and ${remaining}.`);
        }
        intent.amount_refunded += amount;
        return json(res, {
          id: rid("re"),
          object: "refund",
          amount,
          currency: intent.currency,
          payment_intent: intent.id,
          status: "succeeded",
          created: nowSeconds(),
          metadata: (body.metadata as Record<string, string>) ?? {},
        });
      }
      return stripeError(res, 404, `Unrecognized request URL (${method}: ${url.pathname}).`);
    }

    if (parts[0] === "pay" && parts[1]) {
      const session = sessions.get(parts[1]);
      if (!session) {
        res.writeHead(404, { "Content-Type": "text/plain" });
        return res.end("No such checkout.");
      }
      if (method === "POST") {
        await readBody(req);
        if (session.status !== "open") {
          res.writeHead(409, { "Content-Type": "text/html" });
          return res.end(payPage(session, "This checkout can no longer be paid."));
        }
        const intent: Intent = {
          id: rid("pi"),
          object: "payment_intent",
          amount: session.amount_total,
          amount_refunded: 0,
          currency: session.currency,
          status: "succeeded",
        };
        intents.set(intent.id, intent);
        session.status = "complete";
        session.payment_status = "paid";
        session.payment_intent = intent.id;
        await deliver("checkout.session.completed", session);
        res.writeHead(303, { Location: session.success_url.replace("{CHECKOUT_SESSION_ID}", session.id) });
        return res.end();
      }
      res.writeHead(200, { "Content-Type": "text/html; charset=utf-8" });
      return res.end(payPage(session));
    }

    res.writeHead(404, { "Content-Type": "text/plain" });
    res.end("Not found");
  }

  function createSession(body: Record<string, unknown>): Session {
    const items = (
      Array.isArray(body.line_items) ? body.line_items : Object.values(body.line_items ?? {})
    ) as Array<{
      quantity?: string;
      price_data?: { currency?: string; unit_amount?: string; product_data?: { name?: string } };
    }>;
    if (!items.length) throw Object.assign(new Error("line_items is required"), { status: 400 });
    const amount = items.reduce(
      (sum, i) => sum + Number(i.price_data?.unit_amount ?? 0) * Number(i.quantity ?? 1),
      0,
    );
    const id = rid("cs_test");
    const session: Session = {
      id,
      object: "checkout.session",
      mode: String(body.mode ?? "payment"),
      status: "open",
      payment_status: "unpaid",
      amount_total: amount,
      amount_subtotal: amount,
      currency: String(items[0].price_data?.currency ?? "usd"),
      customer_email: body.customer_email ? String(body.customer_email) : null,
      client_reference_id: body.client_reference_id ? String(body.client_reference_id) : null,
      metadata: (body.metadata as Record<string, string>) ?? {},
      payment_intent: null,
      success_url: String(body.success_url ?? ""),
      cancel_url: body.cancel_url ? String(body.cancel_url) : null,
      url: `${baseUrl}/pay/${id}`,
      created: nowSeconds(),
      expires_at: nowSeconds() + 24 * 3600,
      livemode: false,
      line_items_description: items.map((i) => i.price_data?.product_data?.name ?? "Item").join(", "),
    };
    sessions.set(id, session);
    return session;
  }

  const server = http.createServer((req, res) => {
    handle(req, res).catch((error: Error & { status?: number }) => {
      if (!res.headersSent) stripeError(res, error.status ?? 500, error.message, "api_error");
      else res.end();
    });
  });
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(options.port, host, () => resolve());
  });
  server.unref();
  const port = (server.address() as AddressInfo).port;
  baseUrl = `http://${host}:${port}`;
  return {
    port,
    baseUrl,
    delivered,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}
