import { afterEach, describe, expect, it, vi } from "vitest";

const saved = { ...process.env };
afterEach(() => {
  process.env = { ...saved };
  vi.resetModules();
});

describe("production settings", () => {
  it("refuses to start without SMTP unless mail capture is asked for by name", async () => {
    process.env.NODE_ENV = "production";
    delete process.env.MAIL_CAPTURE;
    delete process.env.SMTP_URL;
    await expect(import("~/server/env.server")).rejects.toThrow(/set SMTP_URL/);
  });

  it("does not capture mail in production when an SMTP server is set", async () => {
    process.env.NODE_ENV = "production";
    delete process.env.MAIL_CAPTURE;
    process.env.SMTP_URL = "smtp://127.0.0.1:2525";
    const { mailCaptureOn, secureCookies } = await import("~/server/env.server");
    expect(mailCaptureOn()).toBe(false);
    expect(secureCookies()).toBe(true);
  });

  it("marks the session cookie Secure in production", async () => {
    process.env.NODE_ENV = "production";
    process.env.SMTP_URL = "smtp://127.0.0.1:2525";
    delete process.env.SECURE_COOKIES;
    const { sessionCookie } = await import("~/server/session.server");
    expect(sessionCookie("id.secret")).toMatch(/; Secure/);
    expect(sessionCookie("id.secret")).toMatch(/HttpOnly/);
  });
});
