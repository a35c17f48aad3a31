import { expect, test } from "@playwright/test";
import { DEMO, signIn, uniqueEmail, waitForEmail } from "./support";

test("a visitor sets up a new shop and lands on its boards", async ({ page }) => {
  await page.goto("/");
  await expect(page.getByRole("heading", { level: 1 })).toContainText("Find the dead rail faster");
  await page.getByRole("link", { name: "Set up a shop" }).first().click();
  await page.getByLabel("Your name").fill("Ada Newshop");
  await page.getByLabel("Shop name").fill("Copperline Repairs");
  await page.getByLabel("E-mail").fill(uniqueEmail("founder"));
  await page.getByLabel("Password").fill("a long new password");
  await page.getByRole("button", { name: "Create shop" }).click();
  await expect(page).toHaveURL(/\/boards$/);
  await expect(page.getByRole("status")).toContainText("Copperline Repairs is ready");
  await expect(page.getByRole("heading", { name: "No boards yet" })).toBeVisible();
  await expect(page.getByRole("link", { name: "Shop settings" })).toBeVisible();
});

const NAV_BY_ROLE = {
  owner: ["Boards", "Runs", "Jobs", "Insights", "Shop settings", "API tokens"],
  lead: ["Boards", "Runs", "Jobs", "Insights", "API tokens"],
  tech: ["Boards", "Runs", "Jobs", "API tokens"],
  desk: ["Boards", "Runs", "Jobs", "API tokens"],
} as const;

for (const role of Object.keys(NAV_BY_ROLE) as Array<keyof typeof NAV_BY_ROLE>) {
  test(`the ${role} signs in and sees the navigation of that role`, async ({ page }) => {
    await signIn(page, DEMO[role]);
    const nav = page.getByRole("navigation", { name: "Main" });
    await expect(nav.getByRole("link")).toHaveText([...NAV_BY_ROLE[role]]);
    await expect(page.getByRole("link", { name: /Orrin Computing Marlow 15/ })).toBeVisible();
  });
}

test("a wrong password gets a clear message", async ({ page }) => {
  await page.goto("/login");
  await page.getByLabel("E-mail").fill(DEMO.lead);
  await page.getByLabel("Password").fill("not the password");
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByRole("alert")).toHaveText("That e-mail and password do not match an account.");
  await expect(page).toHaveURL(/\/login/);
});

test("repeated failures are throttled with the wait in the message", async ({ page }) => {
  // The e2e server allows 5 failures per account (SIGNIN_MAX_PER_ACCOUNT in playwright.config.ts).
  const email = uniqueEmail("throttled");
  await page.goto("/login");
  for (let i = 0; i < 5; i++) {
    await page.getByLabel("E-mail").fill(email);
    await page.getByLabel("Password").fill(`wrong password ${i}`);
    await page.getByRole("button", { name: "Sign in" }).click();
    await expect(page.getByRole("alert")).toHaveText("That e-mail and password do not match an account.");
  }
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill("wrong again");
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByRole("alert")).toContainText(/Too many failed sign-ins\. Wait \d+ minutes?/);
});

test("signing out ends the session", async ({ page }) => {
  await signIn(page, DEMO.desk);
  await page.getByRole("button", { name: "Sign out", exact: true }).click();
  await expect(page).toHaveURL(/\/login/);
  await page.goto("/boards");
  await expect(page).toHaveURL(/\/login\?redirectTo=%2Fboards/);
});

test("signing out everywhere ends the member's session in another browser too", async ({ page, browser }) => {
  // A shop of its own: ending every session of a demo account would sign out the other tests.
  const email = uniqueEmail("everywhere");
  await page.goto("/signup");
  await page.getByLabel("Your name").fill("Eve Everywhere");
  await page.getByLabel("Shop name").fill("Twin Bench Repairs");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill("a long new password");
  await page.getByRole("button", { name: "Create shop" }).click();
  await expect(page).toHaveURL(/\/boards$/);

  const context = await browser.newContext();
  const other = await context.newPage();
  await signIn(other, email, "a long new password");
  await other.goto("/runs");
  await expect(other).toHaveURL(/\/runs$/);

  await page.getByRole("button", { name: "Sign out everywhere" }).click();
  await expect(page).toHaveURL(/\/login/);
  // The other browser still holds its cookie, but the server no longer knows the session.
  await other.goto("/boards");
  await expect(other).toHaveURL(/\/login\?redirectTo=%2Fboards/);
  await context.close();
});

test("an owner invites a technician who accepts from the e-mail", async ({ page, browser }) => {
  await signIn(page, DEMO.owner);
  await page.getByRole("link", { name: "Shop settings" }).click();
  const email = uniqueEmail("invitee");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Role", { exact: true }).selectOption("tech");
  await page.getByRole("button", { name: "Send invitation" }).click();
  await expect(page.getByRole("status")).toContainText(`Invitation sent to ${email}`);

  const mail = await waitForEmail(page, email, /invited you to Harbor Bench Repair/);
  const link = /https?:\/\/\S+\/invite\/[a-z0-9]+/.exec(mail.text)![0];
  const context = await browser.newContext();
  const invitee = await context.newPage();
  await invitee.goto(link);
  await expect(invitee.getByRole("heading", { name: "Join Harbor Bench Repair" })).toBeVisible();
  await invitee.getByLabel("Your name").fill("Ivo Invited");
  await invitee.getByLabel("Choose a password").fill("invited tech password");
  await invitee.getByRole("button", { name: "Accept invitation" }).click();
  await expect(invitee).toHaveURL(/\/boards/);
  await expect(invitee.getByText("Ivo Invited · Technician")).toBeVisible();
  await context.close();
});

test("a technician is refused the shop settings page", async ({ page }) => {
  await signIn(page, DEMO.tech);
  await expect(page.getByRole("link", { name: "Shop settings" })).toHaveCount(0);
  const res = await page.goto("/settings");
  expect(res?.status()).toBe(403);
  await expect(page.getByRole("heading", { name: "Not allowed" })).toBeVisible();
});

test("the theme toggle is remembered across visits", async ({ page }) => {
  await signIn(page, DEMO.lead);
  const html = page.locator("html");
  await expect(html).toHaveAttribute("data-theme", "system");
  await page.getByRole("button", { name: /Theme: follows system/ }).click();
  await expect(html).toHaveAttribute("data-theme", "light");
  await page.getByRole("button", { name: /Theme: light/ }).click();
  await expect(html).toHaveAttribute("data-theme", "dark");
  await page.reload();
  await expect(html).toHaveAttribute("data-theme", "dark");
});

test("an unknown address shows the not-found page", async ({ page }) => {
  const res = await page.goto("/no/such/page");
  expect(res?.status()).toBe(404);
  await expect(page.getByRole("heading", { name: "Page not found" })).toBeVisible();
});

test("pages carry a nonce-based script policy and still hydrate under it", async ({ page }) => {
  const errors: string[] = [];
  page.on("console", (m) => {
    if (m.type() === "error" && /Content Security Policy/i.test(m.text())) errors.push(m.text());
  });
  const res = await page.goto("/login");
  const headers = res!.headers();
  const csp = headers["content-security-policy"];
  const scriptSrc = csp.split(";").find((d) => d.trim().startsWith("script-src"))!;
  expect(scriptSrc).toMatch(/'nonce-[A-Za-z0-9]+'/);
  expect(scriptSrc).not.toContain("unsafe-inline");
  expect(csp).toContain("frame-ancestors 'none'");
  // ASVS 5.0 3.4.3's minimum policy: object-src 'none' and base-uri 'none'.
  expect(csp).toContain("object-src 'none'");
  expect(csp).toContain("base-uri 'none'");
  expect(headers["referrer-policy"]).toBe("strict-origin-when-cross-origin");
  expect(headers["x-content-type-options"]).toBe("nosniff");
  // The route modules register themselves only when the module scripts ran: proof the nonce let them in.
  await expect
    .poll(() =>
      page.evaluate(
        () =>
          Object.keys((window as { __reactRouterRouteModules?: object }).__reactRouterRouteModules ?? {})
            .length,
      ),
    )
    .toBeGreaterThan(0);
  expect(errors).toEqual([]);
});

test("resource routes and data requests carry nosniff, resource routes a load-nothing policy; no HSTS over http", async ({
  page,
}) => {
  await signIn(page, DEMO.lead);
  for (const url of ["/healthz", "/dev/outbox.json", "/maps/no-such-map/export"]) {
    const res = await page.request.get(url, { maxRedirects: 0 });
    const h = res.headers();
    expect(h["x-content-type-options"], url).toBe("nosniff");
    expect(h["content-security-policy"], url).toBe("default-src 'none'; frame-ancestors 'none'");
    // The e2e server is the plain-http local demo (SECURE_COOKIES=0): HSTS there would lock the host out of http.
    expect(h["strict-transport-security"], url).toBeUndefined();
  }
  const data = await page.request.get("/boards.data");
  expect(data.status()).toBe(200);
  expect(data.headers()["x-content-type-options"]).toBe("nosniff");
  const doc = await page.request.get("/boards");
  expect(doc.headers()["strict-transport-security"]).toBeUndefined();
});
