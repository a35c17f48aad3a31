import { expect, type Page } from "@playwright/test";

export const DEMO_PASSWORD = "bench-demo-2026";
export const DEMO = {
  owner: "owner@harbor.example",
  lead: "lead@harbor.example",
  tech: "tech@harbor.example",
  desk: "desk@harbor.example",
} as const;

export async function signIn(page: Page, email: string, password = DEMO_PASSWORD) {
  await page.goto("/login");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page).toHaveURL(/\/boards/);
}

type Captured = { id: number; to: string; subject: string; text: string };

/** Reads the captured outbox until a message to `to` matching `subject` arrives. */
export async function waitForEmail(page: Page, to: string, subject: RegExp): Promise<Captured> {
  let found: Captured | undefined;
  await expect
    .poll(async () => {
      const res = await page.request.get("/dev/outbox.json");
      const { messages } = (await res.json()) as { messages: Captured[] };
      found = messages.find((m) => m.to === to && subject.test(m.subject));
      return !!found;
    })
    .toBe(true);
  return found!;
}

export const uniqueEmail = (prefix: string) =>
  `${prefix}-${Date.now()}-${Math.floor(Math.random() * 1e6)}@e2e.example`;

/**
 * Waits until React has hydrated the element `selector` names (React attaches its fiber to a node once it owns
 * it). A control that only narrows or reveals through React state must not be used before: a change made to
 * the server-rendered page is not seen by the state the hydrated page starts from.
 */
export async function waitForHydration(page: Page, selector: string) {
  await page.waitForFunction((s) => {
    const el = document.querySelector(s);
    return !!el && Object.keys(el).some((k) => k.startsWith("__reactFiber"));
  }, selector);
}

/** The environment of a production server.mjs a test starts itself, on its own database and port. */
export function productionServerEnv(
  port: number,
  databaseUrl: string,
  extra: Record<string, string> = {},
  inherited: NodeJS.ProcessEnv = process.env,
): NodeJS.ProcessEnv {
  return {
    ...inherited,
    NODE_ENV: "production",
    PORT: String(port),
    HOST: "127.0.0.1",
    RAILWISE_BUILD_DIR: process.env.RAILWISE_BUILD_DIR ?? "build",
    DATABASE_URL: databaseUrl,
    MAIL_CAPTURE: "1",
    SECURE_COOKIES: "0",
    SESSION_SECRET: "e2e-server-session-secret-0123456789",
    ...extra,
  };
}
