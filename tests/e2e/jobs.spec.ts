import AxeBuilder from "@axe-core/playwright";
import { type Browser, expect, type Page, test } from "@playwright/test";
import { OM_5150_MAP } from "../../seed/maps/om-5150";
import { simulateBoard } from "../support/bench-sim";
import { DEMO, signIn, uniqueEmail, waitForEmail, waitForHydration } from "./support";

// The repair from intake to paid, across the desk, a technician and the customer, with the payment taken on
// the local fake provider the server starts by itself. The bench is simulated as in the walker's tests: each
// net reads its true value under the injected fault (R362, the open 3.3 V standby enable resistor).
const SIM = simulateBoard(OM_5150_MAP, ["src-charger", "src-battery", "src-button"], { part: "r-en3" });
const NAME_TO_ID = new Map(
  OM_5150_MAP.nodes.filter((n) => n.kind === "rail" || n.kind === "signal").map((n) => [n.name, n.id]),
);
const MODE_BY_LABEL = {
  "Voltage, board powered": "voltage",
  "Resistance to ground, power removed": "resistance",
  "Diode drop to ground, power removed": "diode",
} as const;

/** Answers the walker's checks with the simulated board until it shows a finding. */
async function walkToFinding(page: Page) {
  for (let i = 0; i < 40; i++) {
    const title = page.locator("#check-title");
    const finding = page.locator("#finding-title");
    await expect(title.or(finding)).toBeVisible();
    if (await finding.isVisible()) return;
    const net = (await title.textContent())!.trim();
    const modeLabel = (await page
      .getByText(
        /^(Voltage, board powered|Resistance to ground, power removed|Diode drop to ground, power removed)$/,
      )
      .textContent())!.trim();
    const gate = page.getByRole("button", { name: /Power and battery are removed|The board is powered/ });
    if (await gate.isVisible()) await gate.click();
    const heading = page.getByRole("heading", { name: /^Readings \(\d+\)$/ });
    const before = Number(/\((\d+)\)/.exec((await heading.textContent()) ?? "")?.[1]);
    const input = page.getByLabel(/^Reading \(/);
    await input.fill(
      SIM.readingText(NAME_TO_ID.get(net)!, MODE_BY_LABEL[modeLabel as keyof typeof MODE_BY_LABEL]),
    );
    await input.press("Enter");
    await expect(page.getByRole("heading", { name: `Readings (${before + 1})` })).toBeVisible();
  }
  throw new Error("no finding after 40 readings");
}

async function as(browser: Browser, email: string): Promise<Page> {
  const context = await browser.newContext();
  const page = await context.newPage();
  await signIn(page, email);
  return page;
}

test("desk takes a device in, quotes it, the customer approves and pays online, the job shows paid", async ({
  browser,
}) => {
  test.setTimeout(300_000);
  const customerEmail = uniqueEmail("customer");

  // 1. Intake at the desk.
  const desk = await as(browser, DEMO.desk);
  await desk.goto("/jobs");
  // Under the test runner the client-side move to this page has been seen to stall (not reproducible by hand);
  // the link is checked, then the page is opened directly.
  await expect(desk.getByRole("link", { name: "Take in a device" })).toHaveAttribute("href", "/jobs/new");
  await desk.goto("/jobs/new");
  await desk.getByLabel("Name", { exact: true }).fill("Nell Tamsin");
  await desk.getByLabel("E-mail", { exact: true }).fill(customerEmail);
  await desk.getByLabel("Phone", { exact: true }).fill("555-0142");
  await desk.getByLabel("The customer agrees to be contacted").check();
  await desk
    .getByLabel("Board", { exact: true })
    .selectOption({ label: "Orrin Computing Marlow 15 · OM-5150 rev C" });
  await desk.getByLabel("Serial number").fill("OM5150-E2E-7");
  await desk.getByLabel("Condition on arrival").fill("Corner dent, no liquid marks");
  await desk.getByLabel("Accessories received").fill("USB-C charger");
  await desk.getByLabel("Complaint").fill("No power, charger light stays off");
  await desk.getByLabel(/Agreed diagnostic fee/).fill("45.00");
  await desk.getByLabel("Device passcode (optional)").fill("7391");
  // Submitting without the terms is refused beside the box and creates nothing.
  await desk.getByRole("button", { name: "Open job" }).click();
  await expect(desk.getByText("The customer must accept the shop's terms")).toBeVisible();
  await desk.getByLabel("The customer has read and accepts these terms").check();
  await desk.getByRole("button", { name: "Open job" }).click();
  await expect(desk.getByRole("heading", { level: 1 })).toHaveText(/^Job #\d+$/);
  const jobUrl = desk.url();
  const jobNumber = (await desk.getByRole("heading", { level: 1 }).textContent())!.replace("Job #", "");
  await expect(desk.getByRole("status")).toContainText(`Job #${jobNumber} opened`);
  await waitForEmail(desk, customerEmail, /we have your device/);

  // The bench tag prints the number and a QR code to the job.
  await desk.goto(`${jobUrl}/tag`);
  await expect(desk.getByLabel("Bench tag")).toContainText(`#${jobNumber}`);
  await expect(desk.getByRole("img", { name: `QR code linking to job ${jobNumber}` })).toBeVisible();

  // The job board lists it under Received.
  await desk.goto("/jobs");
  await expect(desk.getByRole("link", { name: `#${jobNumber}`, exact: true })).toBeVisible();
  await desk
    .getByRole("navigation", { name: "Jobs by state" })
    .getByRole("link", { name: /Received/ })
    .click();
  await expect(desk).toHaveURL(/state=received/);
  await expect(desk.getByRole("link", { name: `#${jobNumber}`, exact: true })).toBeVisible();

  // 2. The technician takes the job, starts diagnosing, and the run link carries the job.
  const tech = await as(browser, DEMO.tech);
  await tech.goto(jobUrl);
  await tech.getByRole("button", { name: "Take this job" }).click();
  await expect(tech.getByRole("status")).toContainText("Technician assigned");
  await tech.getByRole("button", { name: "Show device passcode" }).click();
  await expect(tech.getByText("7391")).toBeVisible();
  await tech.getByRole("button", { name: "Start diagnosis" }).click();
  await expect(tech.getByRole("status")).toContainText("Diagnosing");
  const runLink = tech.getByRole("link", { name: "Start a guided diagnosis run for this job" });
  await expect(runLink).toHaveAttribute("href", /\/runs\/new\?jobId=/);
  await runLink.click();
  await expect(tech).toHaveURL(/\/runs\/new\?jobId=/);
  await expect(tech.getByText(new RegExp(`· job #${jobNumber}\\b`))).toBeVisible();
  await tech.getByRole("radio", { name: "Charger and battery" }).check();
  await tech.getByRole("button", { name: "Start the run" }).click();
  await expect(tech).toHaveURL(/\/runs\/[a-z0-9]+$/);
  await walkToFinding(tech);
  await expect(tech.getByTestId("finding-message")).toContainText("R362");
  await tech.getByRole("radio", { name: /Replace R362/ }).check();
  await tech.getByLabel("Parts used (reference designators)").fill("R362");
  await tech.getByRole("radio", { name: "Powers on" }).check();
  await tech.getByRole("button", { name: "Record fix and outcome" }).click();
  await expect(tech).toHaveURL(/\/report$/);
  // Back on the job: the run, its finding and the part used are on the ticket.
  await tech.goto(jobUrl);
  const work = tech.getByRole("region", { name: "Runs and findings" });
  await expect(work).toContainText("R362");
  await expect(work).toContainText("Parts used: R362");
  // The desk never sees the passcode.
  await desk.goto(jobUrl);
  await expect(desk.getByText("only the assigned technician can see it")).toBeVisible();

  // 3. The desk builds the quote and sends it.
  await desk.getByRole("link", { name: "Build a quote" }).click();
  // The quote starts from the finding: the part used, the labour for its fix, and the agreed fee.
  await expect(desk.getByLabel("Line 1 description")).toHaveValue(/R362/);
  await expect(desk.getByLabel("Line 2 kind")).toHaveValue("labour");
  await expect(desk.getByLabel("Line 3 unit price")).toHaveValue("45.00");
  await desk.getByLabel("Line 1 quantity").fill("2");
  await desk.getByLabel("Line 1 unit price").fill("4.80");
  await expect(desk.getByTestId("quote-preview")).toHaveText("Subtotal $139.60 · tax $11.52 · total $151.12");
  await desk.getByRole("button", { name: "Save quote" }).click();
  // 85.00 + 45.00 + 2 × 4.80 = 139.60; tax 8.25 % = 11.517 → 11.52 (half-up on the subtotal); total 151.12.
  await expect(desk.getByRole("status")).toContainText("$151.12");
  await desk.getByRole("button", { name: "Send quote to customer" }).click();
  await expect(desk.getByRole("status")).toContainText(`e-mailed to ${customerEmail}`);

  // 4. The customer opens the e-mailed link (no sign-in), approves and pays on the provider's page.
  const quoteMail = await waitForEmail(desk, customerEmail, /your repair quote/);
  const link = /(https?:\/\/\S+\/q\/[a-z2-7]+)/.exec(quoteMail.text)![1];
  const customerContext = await browser.newContext();
  const customer = await customerContext.newPage();
  await customer.goto(link);
  await expect(customer.getByRole("heading", { level: 1 })).toContainText("Nell Tamsin");
  await expect(customer.getByRole("table")).toContainText("$151.12");
  expect(await seriousViolations(customer)).toEqual([]);
  await customer.getByRole("button", { name: "Approve the repair" }).click();
  await expect(customer.getByText("You approved this repair.")).toBeVisible();
  await customer.getByRole("button", { name: "Pay $151.12 now" }).click();
  await expect(customer.getByRole("heading", { name: "Pay $151.12" })).toBeVisible();
  await expect(customer.getByText("Local test checkout")).toBeVisible();
  await customer.getByRole("button", { name: "Pay" }).click();
  await expect(customer).toHaveURL(/\/q\/[a-z2-7]+\?paid=1/);
  await expect(customer.getByTestId("public-invoice-status")).toContainText("Paid in full ($151.12)");

  // 5. The desk sees the job repairing with the invoice paid, and the receipt was e-mailed.
  await desk.goto(jobUrl);
  await expect(desk.getByRole("list", { name: "Job progress" }).locator('[aria-current="step"]')).toHaveText(
    "Repairing",
  );
  await expect(desk.getByTestId("invoice-status")).toHaveText("Paid");
  const receipt = await waitForEmail(desk, customerEmail, /receipt for invoice/);
  expect(receipt.text).toContain("paid in full");
  await expect(desk.getByText("the customer").first()).toBeVisible();
});

async function seriousViolations(page: Page) {
  const results = await new AxeBuilder({ page }).withTags(["wcag2a", "wcag2aa"]).analyze();
  return results.violations
    .filter((v) => v.impact === "serious" || v.impact === "critical")
    .map((v) => `${v.id}: ${v.nodes[0]?.target}`);
}

test("the job pages have no serious or critical accessibility violations, in both themes", async ({
  browser,
}) => {
  // Seven full axe passes: each takes seconds on a busy 2-core machine.
  test.setTimeout(180_000);
  const desk = await as(browser, DEMO.desk);
  await desk.goto("/jobs/new");
  expect(await seriousViolations(desk)).toEqual([]);
  await desk.getByLabel("Name", { exact: true }).fill("Ola Axe");
  await desk.getByLabel("Phone", { exact: true }).fill("555-0199");
  await desk.getByLabel("Serial number").fill("AX-1");
  await desk.getByLabel("Complaint").fill("Stays dark on the charger");
  await desk.getByLabel("The customer has read and accepts these terms").check();
  await desk.getByRole("button", { name: "Open job" }).click();
  await expect(desk.getByRole("heading", { level: 1 })).toHaveText(/^Job #\d+$/);
  const jobUrl = desk.url();
  for (const theme of ["light", "dark"] as const) {
    await desk.emulateMedia({ colorScheme: theme });
    for (const url of ["/jobs", jobUrl, `${jobUrl}/tag`]) {
      await desk.goto(url);
      expect(await seriousViolations(desk), `${url} (${theme})`).toEqual([]);
    }
  }
});

test("the closed jobs open with the last closed first, each with the day it closed", async ({ browser }) => {
  const desk = await as(browser, DEMO.desk);
  await desk.goto("/jobs?state=closed");
  await waitForHydration(desk, "#job-filter");
  const table = desk.getByRole("table");
  const headers = (await table.locator("thead th").allTextContents()).map((h) => h.trim());
  const closedCol = headers.findIndex((h) => h.startsWith("Closed"));
  expect(closedCol, headers.join(" | ")).toBeGreaterThan(0);
  await expect(table.locator("thead th").nth(closedCol)).toHaveAttribute("aria-sort", "descending");
  const days = await table.locator(`tbody tr td:nth-child(${closedCol + 1})`).allTextContents();
  // The demo's history closes jobs over months, and its job #1 (numbered first) closed weeks ago: a list in
  // job-number order would put that day out of order.
  expect(days.length).toBeGreaterThan(50);
  expect(days.every((d) => /^\d{4}-\d{2}-\d{2}$/.test(d))).toBe(true);
  expect(days).toEqual([...days].sort().reverse());
  const numbers = (await table.locator("tbody tr td:nth-child(1)").allTextContents()).map((t) => t.trim());
  expect(numbers).toContain("#1");
  expect(numbers.at(-1)).not.toBe("#1");
});
