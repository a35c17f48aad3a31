import {
  Body,
  Button,
  Container,
  Head,
  Heading,
  Hr,
  Html,
  Preview,
  Section,
  Text,
} from "@react-email/components";
import { render } from "@react-email/render";
import type { ReactElement } from "react";
import { formatMoney } from "~/lib/money";
import { audit } from "./audit.server";
import { sendEmail } from "./email.server";

// Customer e-mail rendered from React Email templates, with the plain-text alternative made from the same
// template. Status updates go only to customers who agreed to be contacted; a quote and a receipt are what
// the customer asked for, so they go to any customer with an address.

export { STATUS_UPDATE_LABELS, STATUS_UPDATES, type StatusUpdate } from "~/lib/customer-updates";
import type { StatusUpdate } from "~/lib/customer-updates";

type ShopInfo = { id: string; name: string; currency: string };
type JobInfo = { id: string; number: number; device: string };
type CustomerInfo = { name: string; email: string | null; consentToContact: boolean };

const main = {
  backgroundColor: "#f6f4ef",
  fontFamily: "'IBM Plex Sans', Arial, sans-serif",
  color: "#1b1f24",
};
const box = {
  backgroundColor: "#ffffff",
  border: "1px solid #d6d0c4",
  borderRadius: 8,
  padding: 24,
  maxWidth: 560,
};
const button = {
  backgroundColor: "#9c4a17",
  color: "#ffffff",
  borderRadius: 6,
  padding: "10px 18px",
  textDecoration: "none",
  fontWeight: 600,
};
const small = { color: "#56606b", fontSize: 13 };

function Frame({ shop, preview, children }: { shop: ShopInfo; preview: string; children: React.ReactNode }) {
  return (
    <Html lang="en">
      <Head />
      <Preview>{preview}</Preview>
      <Body style={main}>
        <Container style={box}>
          <Text style={{ ...small, marginTop: 0 }}>{shop.name}</Text>
          {children}
          <Hr />
          <Text style={small}>
            {shop.name} · sent by Railwise on the shop's behalf. Reply to this e-mail to reach the shop.
          </Text>
        </Container>
      </Body>
    </Html>
  );
}

export function ReceivedEmail(p: { shop: ShopInfo; job: JobInfo; customer: CustomerInfo }) {
  return (
    <Frame shop={p.shop} preview={`We have your ${p.job.device} (job ${p.job.number})`}>
      <Heading as="h1">We have your device</Heading>
      <Text>Hello {p.customer.name},</Text>
      <Text>
        Your {p.job.device} is booked in as job {p.job.number}. A technician will diagnose it and we will send
        you a quote before any repair work starts.
      </Text>
    </Frame>
  );
}

export function QuoteEmail(p: {
  shop: ShopInfo;
  job: JobInfo;
  customer: CustomerInfo;
  totalMinor: number;
  link: string;
  expiresAt: Date;
}) {
  const total = formatMoney(p.totalMinor, p.shop.currency);
  return (
    <Frame shop={p.shop} preview={`Your repair quote for job ${p.job.number}: ${total}`}>
      <Heading as="h1">Your repair quote</Heading>
      <Text>Hello {p.customer.name},</Text>
      <Text>
        We have diagnosed your {p.job.device} (job {p.job.number}). The repair comes to {total} including tax.
        Please approve or decline it on the page below.
      </Text>
      <Section>
        <Button href={p.link} style={button}>
          Review the quote
        </Button>
      </Section>
      <Text style={small}>
        This link works until {p.expiresAt.toISOString().slice(0, 10)}. If the button does not work, open{" "}
        {p.link}
      </Text>
    </Frame>
  );
}

export function ReadyEmail(p: { shop: ShopInfo; job: JobInfo; customer: CustomerInfo }) {
  return (
    <Frame shop={p.shop} preview={`Job ${p.job.number} is ready for pickup`}>
      <Heading as="h1">Ready for pickup</Heading>
      <Text>Hello {p.customer.name},</Text>
      <Text>
        Your {p.job.device} (job {p.job.number}) is repaired, tested and ready to collect. Please bring your
        intake receipt.
      </Text>
    </Frame>
  );
}

export function ReceiptEmail(p: {
  shop: ShopInfo;
  job: JobInfo;
  customer: CustomerInfo;
  invoiceNumber: number;
  amountMinor: number;
  paidMinor: number;
  totalMinor: number;
  method: string;
}) {
  const balance = Math.max(0, p.totalMinor - p.paidMinor);
  return (
    <Frame shop={p.shop} preview={`Receipt for invoice ${p.invoiceNumber}`}>
      <Heading as="h1">Payment received</Heading>
      <Text>Hello {p.customer.name},</Text>
      <Text>
        We received {formatMoney(p.amountMinor, p.shop.currency)} ({p.method}) for invoice {p.invoiceNumber},
        job {p.job.number}. Paid so far: {formatMoney(p.paidMinor, p.shop.currency)} of{" "}
        {formatMoney(p.totalMinor, p.shop.currency)}.
      </Text>
      <Text>
        {balance === 0
          ? "The invoice is paid in full. Thank you."
          : `Still to pay: ${formatMoney(balance, p.shop.currency)}.`}
      </Text>
    </Frame>
  );
}

async function deliver(to: string, subject: string, element: ReactElement) {
  const [html, text] = await Promise.all([render(element), render(element, { plainText: true })]);
  await sendEmail({ to, subject, text, html });
}

export type SendOutcome = { sent: true } | { sent: false; reason: string };

export async function sendStatusUpdate(
  kind: StatusUpdate,
  p: { shop: ShopInfo; job: JobInfo; customer: CustomerInfo },
  actorId: string | null,
): Promise<SendOutcome> {
  if (!p.customer.email) return { sent: false, reason: "The customer has no e-mail address." };
  if (!p.customer.consentToContact)
    return { sent: false, reason: "The customer did not agree to be contacted." };
  const element = kind === "received" ? <ReceivedEmail {...p} /> : <ReadyEmail {...p} />;
  const subject =
    kind === "received"
      ? `${p.shop.name}: we have your device (job ${p.job.number})`
      : `${p.shop.name}: job ${p.job.number} is ready for pickup`;
  await deliver(p.customer.email, subject, element);
  await audit({
    shopId: p.shop.id,
    actorId,
    action: "job.customer-emailed",
    subject: p.job.id,
    data: { kind },
  });
  return { sent: true };
}

export async function sendQuoteEmail(p: Parameters<typeof QuoteEmail>[0]) {
  if (!p.customer.email) return { sent: false as const, reason: "The customer has no e-mail address." };
  await deliver(
    p.customer.email,
    `${p.shop.name}: your repair quote for job ${p.job.number}`,
    <QuoteEmail {...p} />,
  );
  return { sent: true as const };
}

export async function sendReceiptEmail(p: Parameters<typeof ReceiptEmail>[0]) {
  if (!p.customer.email) return { sent: false as const, reason: "The customer has no e-mail address." };
  await deliver(
    p.customer.email,
    `${p.shop.name}: receipt for invoice ${p.invoiceNumber}`,
    <ReceiptEmail {...p} />,
  );
  return { sent: true as const };
}
