import { desc } from "drizzle-orm";
import nodemailer from "nodemailer";
import { db } from "./db.server";
import { env, mailCaptureOn } from "./env.server";
import { outbox } from "./schema.server";

export type Mail = { to: string; subject: string; text: string; html?: string };

// With capture on, nodemailer's JSON transport builds the message and we keep it in the outbox table,
// listed at /dev/outbox; in production an SMTP URL is required.
const transport = mailCaptureOn()
  ? nodemailer.createTransport({ jsonTransport: true })
  : nodemailer.createTransport(env.SMTP_URL as string);

export async function sendEmail(mail: Mail) {
  await transport.sendMail({ from: env.MAIL_FROM, ...mail });
  if (mailCaptureOn()) await db.insert(outbox).values(mail);
}

export function listCapturedEmail(limit = 50) {
  return db.select().from(outbox).orderBy(desc(outbox.id)).limit(limit).all();
}

/**
 * An absolute link for e-mail and the payment provider. Built from APP_URL whenever it is set (production
 * requires it when mail is really sent); only while mail is captured, and so reaches nobody, does the
 * request's own origin stand in.
 */
export function appUrl(request: Request, path: string) {
  if (env.APP_URL) return new URL(path, env.APP_URL).toString();
  if (!mailCaptureOn())
    throw new Error("Set APP_URL: links in e-mail are never built from the request's Host header.");
  return new URL(path, new URL(request.url).origin).toString();
}
