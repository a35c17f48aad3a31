import AxeBuilder from "@axe-core/playwright";
import { expect, type Page, test } from "@playwright/test";
import { OM_5150_MAP } from "../../seed/maps/om-5150";
import { simulateBoard } from "../support/bench-sim";
import { DEMO, signIn, waitForEmail } from "./support";

// The bench is simulated: every net the walker asks for reads its true value under the injected fault
// (present → nominal, missing → 0 V, resistance mid-window), computed from the map apart from the engine.
const ATTACHED = ["src-charger", "src-battery", "src-button"];
// A 1×1 PNG (the PNG signature 89 50 4E 47 0D 0A 1A 0A, ISO/IEC 15948 §5.2, then IHDR, IDAT, IEND).
const PNG = Buffer.from(
  "iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mP8z8BQDwAEhQGAhKmMIQAAAABJRU5ErkJggg==",
  "base64",
);
const BOARD = "demo-board-om5150";
const NAME_TO_ID = new Map(
  OM_5150_MAP.nodes.filter((n) => n.kind === "rail" || n.kind === "signal").map((n) => [n.name, n.id]),
);
const MODE_BY_LABEL = {
  "Voltage, board powered": "voltage",
  "Resistance to ground, power removed": "resistance",
  "Diode drop to ground, power removed": "diode",
} as const;

async function startRun(page: Page, strategy?: "order" | "split" | "best") {
  await page.goto(`/runs/new?boardId=${BOARD}`);
  await page.getByLabel("Published map version").selectOption("demo-map-om5150-v1");
  if (strategy) await page.getByLabel("Next-reading strategy").selectOption(strategy);
  await page.getByRole("radio", { name: "Charger and battery" }).check();
  await page.getByRole("button", { name: "Start the run" }).click();
  await expect(page).toHaveURL(/\/runs\/[a-z0-9]+$/);
  await expect(page.getByRole("heading", { name: /^Readings \(0\)$/ })).toBeVisible();
  return page.url().split("/").pop()!;
}

const readingsCount = async (page: Page) => {
  const text = await page.getByRole("heading", { name: /^Readings \(\d+\)$/ }).textContent();
  return Number(/\((\d+)\)/.exec(text ?? "")?.[1]);
};

/** Takes the check on screen with the simulated board's value; returns false when no check is shown. */
async function takeCheck(page: Page, sim: ReturnType<typeof simulateBoard>) {
  const title = page.locator("#check-title");
  const finding = page.locator("#finding-title");
  await expect(title.or(finding)).toBeVisible();
  if (await finding.isVisible()) return false;
  const net = (await title.textContent())!.trim();
  const modeLabel = (await page
    .getByText(
      /^(Voltage, board powered|Resistance to ground, power removed|Diode drop to ground, power removed)$/,
    )
    .textContent())!.trim();
  const mode = MODE_BY_LABEL[modeLabel as keyof typeof MODE_BY_LABEL];
  const gate = page.getByRole("button", { name: /Power and battery are removed|The board is powered/ });
  if (await gate.isVisible()) await gate.click();
  const before = await readingsCount(page);
  const input = page.getByLabel(/^Reading \(/);
  await expect(input).toBeFocused();
  await input.fill(sim.readingText(NAME_TO_ID.get(net)!, mode));
  await input.press("Enter");
  await expect(page.getByRole("heading", { name: `Readings (${before + 1})` })).toBeVisible();
  return true;
}

async function walk(page: Page, sim: ReturnType<typeof simulateBoard>) {
  for (let i = 0; i < 40; i++) if (!(await takeCheck(page, sim))) return readingsCount(page);
  throw new Error("no finding after 40 readings");
}

test.describe("bench walker", () => {
  test("isolates an open enable resistor, records the fix and prints the report", async ({ page }) => {
    await signIn(page, DEMO.tech);
    await startRun(page);
    // Injected fault: R362, the series resistor on the 3.3 V standby enable, is open.
    await walk(page, simulateBoard(OM_5150_MAP, ATTACHED, { part: "r-en3" }));
    await expect(page.getByRole("heading", { name: "Fault isolated" })).toBeVisible();
    await expect(page.getByTestId("finding-message")).toContainText("R362");
    await expect(page.getByText("Readings that prove it")).toBeVisible();
    await page.getByRole("radio", { name: /Replace R362/ }).check();
    await page.getByLabel("Parts used (reference designators)").fill("R362");
    await page.getByRole("radio", { name: "Powers on" }).check();
    await page.getByRole("button", { name: "Record fix and outcome" }).click();
    await expect(page).toHaveURL(/\/report$/);
    await expect(page.getByRole("heading", { name: "Repair report" })).toBeVisible();
    await expect(page.getByTestId("report-outcome")).toHaveText("Powers on");
    await expect(page.getByTestId("report-findings")).toContainText("R362");
    await expect(page.getByTestId("report-findings")).toContainText("parts used: R362");
    await expect(page.getByRole("heading", { name: "Safety" })).toBeVisible();
    await expect(page.getByText(/licensed practice always come first/)).toBeVisible();
    await expect(page.getByText(/Never open or probe the mains side/)).toBeVisible();
    await expect(page.getByRole("button", { name: "Print or save as PDF" })).toBeVisible();
  });

  test("split and best find a late main-rail regulator in fewer readings than power-up order", async ({
    page,
  }) => {
    test.setTimeout(120_000);
    await signIn(page, DEMO.tech);
    // Injected fault: U620, the 1.8 V main buck, late in the power-up.
    const sim = simulateBoard(OM_5150_MAP, ATTACHED, { part: "u-1v8" });
    const counts: Record<string, number> = {};
    for (const strategy of ["order", "split", "best"] as const) {
      await startRun(page, strategy);
      counts[strategy] = await walk(page, sim);
      await expect(page.getByTestId("finding-message")).toContainText("U620");
    }
    expect(counts.split).toBeLessThan(counts.order);
    expect(counts.best).toBeLessThan(counts.order);
  });

  test("a reload mid-run resumes at the same check, and an offline reading is kept and retried", async ({
    page,
    context,
  }) => {
    await signIn(page, DEMO.tech);
    const runId = await startRun(page, "order");
    const sim = simulateBoard(OM_5150_MAP, ATTACHED, { part: "r-en3" });
    await takeCheck(page, sim);
    await takeCheck(page, sim);
    const net = await page.locator("#check-title").textContent();
    await page.reload();
    await expect(page.locator("#check-title")).toHaveText(net!);
    expect(await readingsCount(page)).toBe(2);
    await expect(page.getByTestId("history")).toContainText("SYS_IN");

    await context.setOffline(true);
    const input = page.getByLabel(/^Reading \(/);
    await input.fill(sim.readingText(NAME_TO_ID.get(net!.trim())!, "voltage"));
    await input.press("Enter");
    await expect(page.getByText(/Not saved yet/)).toBeVisible();
    await context.setOffline(false);
    await expect(page.getByRole("heading", { name: "Readings (3)" })).toBeVisible({ timeout: 15_000 });
    await expect(page.getByText(/Not saved yet/)).toHaveCount(0);
    await page.reload();
    expect(await readingsCount(page)).toBe(3);
    expect(page.url()).toContain(runId);
  });

  test("a reading revalidates only the run's data, as bench/walker.ts measures it", async ({ page }) => {
    await signIn(page, DEMO.tech);
    const runId = await startRun(page);
    const data: string[] = [];
    page.on("request", (r) => {
      if (r.url().includes(".data"))
        data.push(`${r.method()} ${new URL(r.url()).pathname}${new URL(r.url()).search}`);
    });
    await takeCheck(page, simulateBoard(OM_5150_MAP, ATTACHED, { part: "r-en3" }));
    await expect.poll(() => data.length).toBeGreaterThanOrEqual(2);
    expect(data.slice(0, 2)).toEqual([
      `POST /runs/${runId}.data`,
      `GET /runs/${runId}.data?_routes=routes%2Frun`,
    ]);
  });

  test("an unparseable reading shows a message and saves nothing", async ({ page }) => {
    await signIn(page, DEMO.tech);
    await startRun(page, "order");
    const input = page.getByLabel(/^Reading \(/);
    await input.fill("twelve-ish");
    await input.press("Enter");
    await expect(page.getByRole("alert")).toContainText('Could not read "twelve-ish"');
    await page.reload();
    expect(await readingsCount(page)).toBe(0);
  });

  test("a front-desk member can follow a run but cannot write readings", async ({ page, browser }) => {
    await signIn(page, DEMO.tech);
    const runId = await startRun(page, "order");
    const desk = await browser.newPage();
    await signIn(desk, DEMO.desk);
    await desk.goto(`/runs/${runId}`);
    await expect(desk.getByText("Your role can follow this run but not take readings.")).toBeVisible();
    await expect(desk.getByLabel(/^Reading \(/)).toHaveCount(0);
    const res = await desk.request.post(`/runs/${runId}`, {
      form: {
        intent: "reading",
        id: "desk-try-0001",
        netId: "vsys",
        mode: "voltage",
        text: "12.6",
        expectedSeq: "1",
      },
    });
    expect(res.status()).toBe(403);
    await page.reload();
    expect(await readingsCount(page)).toBe(0);
    await desk.close();
  });

  test("asking for help reaches the lead, whose extra check appears on the tech's screen without a reload", async ({
    page,
    browser,
  }) => {
    await signIn(page, DEMO.tech);
    const runId = await startRun(page, "order");
    await page.getByLabel("Ask a lead for help").fill("SYS_IN wanders between 9 and 12 V");
    await page.getByRole("button", { name: "Ask for help" }).click();
    await expect(page.getByTestId("notes")).toContainText("SYS_IN wanders");
    const mail = await waitForEmail(page, DEMO.lead, /Help wanted on a run/);
    expect(mail.text).toContain(`/runs/${runId}`);

    const lead = await browser.newPage();
    await signIn(lead, DEMO.lead);
    await expect(lead.getByTestId("notice-badge")).toBeVisible();
    await lead.getByRole("link", { name: /Runs/ }).first().click();
    await lead
      .getByRole("link", { name: /asks for help/ })
      .first()
      .click();
    await expect(lead).toHaveURL(new RegExp(`/runs/${runId}$`));
    await lead.getByLabel("Lead: add a check on net").selectOption({ label: "BATT_PACK" });
    await lead.getByLabel("Why").fill("Check the pack voltage first");
    await lead.getByRole("button", { name: "Add check" }).click();
    await expect(lead.getByTestId("notes")).toContainText("Check the pack voltage first");

    // The tech's page was never reloaded: it polls and shows the lead's check as the next step.
    await expect(page.locator("#check-title")).toHaveText("BATT_PACK", { timeout: 15_000 });
    await expect(page.getByTestId("why")).toContainText("Check the pack voltage first");
    await lead.close();
  });

  test("a note can carry a photo, shown with the note and in the report", async ({ page }) => {
    await signIn(page, DEMO.tech);
    const runId = await startRun(page);
    await page.getByLabel("Add a note").fill("C7 near the charger looks burnt");
    await page.getByLabel(/^Photo/).setInputFiles({ name: "c7.png", mimeType: "image/png", buffer: PNG });
    await page.getByRole("button", { name: "Save note" }).click();
    const photo = page.getByTestId("notes").getByRole("img", { name: /C7 near the charger looks burnt/ });
    await expect(photo).toBeVisible();
    // The browser decoded the stored bytes: a real image of the uploaded size, not a broken link.
    await expect.poll(() => photo.evaluate((img: HTMLImageElement) => img.naturalWidth)).toBe(1);
    // A file that is not a photo is refused with a message, and the note text stays to try again.
    await page.getByLabel("Add a note").fill("see the attached board file");
    await page.getByLabel(/^Photo/).setInputFiles({
      name: "board.png",
      mimeType: "image/png",
      buffer: Buffer.from("not an image at all"),
    });
    await page.getByRole("button", { name: "Save note" }).click();
    await expect(
      page.getByRole("alert").filter({ hasText: "is not a PNG, JPEG or WebP photo" }),
    ).toBeVisible();
    await expect(page.getByLabel("Add a note")).toHaveValue("see the attached board file");
    await expect(page.getByTestId("notes")).not.toContainText("see the attached board file");
    await page.goto(`/runs/${runId}/report`);
    await expect(page.getByRole("img", { name: /C7 near the charger looks burnt/ })).toBeVisible();
  });

  test("a run with no fault in the map ends so, and a lead extends the map from it", async ({
    page,
    browser,
  }) => {
    await signIn(page, DEMO.tech);
    const runId = await startRun(page);
    // Every net reads as it should: the fault lies outside what the map covers.
    await walk(page, simulateBoard(OM_5150_MAP, ATTACHED, { part: "not-on-this-map" }));
    await expect(page.getByRole("heading", { name: "No fault found in this map" })).toBeVisible();
    const taken = await readingsCount(page);
    await page.getByLabel(/Ask a lead/).fill("Every rail is fine but it still won't show a picture");
    await page.getByRole("button", { name: "Ask for help" }).click();
    await expect(page.getByTestId("notes")).toContainText("still won't show a picture");

    const lead = await browser.newPage();
    await signIn(lead, DEMO.lead);
    await lead.goto(`/runs/${runId}`);
    await lead.getByRole("link", { name: "Extend the map from this run" }).click();
    await expect(lead).toHaveURL(new RegExp(`/maps/demo-map-om5150\\?fromRun=${runId}$`));
    await expect(lead.getByRole("heading", { name: /Extending from a run on/ })).toBeVisible();
    await expect(lead.getByTestId("run-evidence").getByRole("listitem")).toHaveCount(taken);
    await expect(lead.getByText("still won't show a picture")).toBeVisible();
    await expect(lead.getByLabel("Change note")).toHaveValue(/Extended after a no-fault run/);
    await lead.close();
  });

  test("the walker has no serious or critical accessibility violations", async ({ page }) => {
    await signIn(page, DEMO.tech);
    await startRun(page);
    const sim = simulateBoard(OM_5150_MAP, ATTACHED, { part: "r-en3" });
    await takeCheck(page, sim);
    const results = await new AxeBuilder({ page }).withTags(["wcag2a", "wcag2aa"]).analyze();
    const bad = results.violations.filter((v) => v.impact === "serious" || v.impact === "critical");
    expect(bad.map((v) => `${v.id}: ${v.nodes[0]?.target}`)).toEqual([]);
  });
});
