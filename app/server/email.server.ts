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

export function appUrl(request: Request, path: string) {
  const base = env.APP_URL ?? new URL(request.url).origin;
  return new URL(path, base).toString();
}
