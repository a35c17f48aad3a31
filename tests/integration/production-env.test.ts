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
    process.env.APP_URL = "https://bench.example.com";
    const { mailCaptureOn, secureCookies } = await import("~/server/env.server");
    expect(mailCaptureOn()).toBe(false);
    expect(secureCookies()).toBe(true);
  });

  it("marks the session cookie Secure in production", async () => {
    process.env.NODE_ENV = "production";
    process.env.SMTP_URL = "smtp://127.0.0.1:2525";
    process.env.APP_URL = "https://bench.example.com";
    delete process.env.SECURE_COOKIES;
    const { sessionCookie } = await import("~/server/session.server");
    expect(sessionCookie("id.secret")).toMatch(/; Secure/);
    expect(sessionCookie("id.secret")).toMatch(/HttpOnly/);
  });

  it("refuses to start when mail is sent but APP_URL is not set, naming the variable", async () => {
    process.env.NODE_ENV = "production";
    delete process.env.MAIL_CAPTURE;
    delete process.env.APP_URL;
    process.env.SMTP_URL = "smtp://127.0.0.1:2525";
    await expect(import("~/server/env.server")).rejects.toThrow(/set APP_URL/);
    process.env.APP_URL = "not a url";
    vi.resetModules();
    await expect(import("~/server/env.server")).rejects.toThrow(/APP_URL: /);
  });

  it("builds e-mailed links from APP_URL, whatever Host the request names", async () => {
    process.env.NODE_ENV = "production";
    delete process.env.MAIL_CAPTURE;
    process.env.SMTP_URL = "smtp://127.0.0.1:2525";
    process.env.APP_URL = "https://bench.example.com";
    const { appUrl } = await import("~/server/email.server");
    const forged = new Request("http://attacker.example/forgot-password", {
      method: "POST",
      headers: { Host: "attacker.example", "X-Forwarded-Host": "attacker.example" },
    });
    expect(appUrl(forged, "/reset-password/abc")).toBe("https://bench.example.com/reset-password/abc");
  });

  it("lets a local demo with captured mail (and development) build links from the request", async () => {
    process.env.NODE_ENV = "production";
    process.env.MAIL_CAPTURE = "1";
    delete process.env.SMTP_URL;
    delete process.env.APP_URL;
    const { appUrl } = await import("~/server/email.server");
    expect(appUrl(new Request("http://127.0.0.1:3000/x"), "/invite/t")).toBe(
      "http://127.0.0.1:3000/invite/t",
    );
  });

  it("sends HSTS only when cookies are Secure: in production, not on a plain-http demo", async () => {
    process.env.NODE_ENV = "production";
    process.env.SMTP_URL = "smtp://127.0.0.1:2525";
    process.env.APP_URL = "https://bench.example.com";
    delete process.env.SECURE_COOKIES;
    const secure = await import("~/server/security-headers.server");
    // ASVS 5.0 3.4.1: at least a year, subdomains included at level 2.
    expect(secure.securityHeaders("n")["Strict-Transport-Security"]).toBe(
      "max-age=31536000; includeSubDomains",
    );
    expect(secure.transportHeaders()["Strict-Transport-Security"]).toMatch(/max-age=31536000/);

    process.env.SECURE_COOKIES = "0";
    vi.resetModules();
    const plain = await import("~/server/security-headers.server");
    expect(plain.securityHeaders("n")).not.toHaveProperty("Strict-Transport-Security");
    expect(plain.transportHeaders()).toEqual({});
  });
});
