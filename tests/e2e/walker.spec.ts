import AxeBuilder from "@axe-core/playwright";
import { expect, type Page, test } from "@playwright/test";
import { DEMO_PHOTO_MARKERS } from "../../seed/demo-photo-layout";
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
    // The cautions follow the fix picked: soldering for a replacement, not for "something else".
    const cautions = page.getByTestId("fix-cautions");
    await expect(page.getByRole("radio", { name: /Replace R362/ })).toBeChecked();
    await expect(cautions).toContainText("Hot air and soldering");
    await expect(cautions).toContainText("ventilate flux fumes");
    await expect(cautions).toContainText("Disconnect the battery before any rework");
    await expect(cautions).toContainText("licensed practice always come first");
    await page.getByRole("radio", { name: /Something else/ }).check();
    await expect(cautions).not.toContainText("Hot air and soldering");
    await expect(cautions).toContainText("Disconnect the battery before any rework");
    await page.getByRole("radio", { name: /Replace R362/ }).check();
    await expect(cautions).toContainText("Hot air and soldering");
    const taken = await readingsCount(page);
    await page.getByLabel("Parts used (reference designators)").fill("R362");
    await page.getByRole("radio", { name: "Powers on" }).check();
    await page.getByRole("button", { name: "Record fix and outcome" }).click();
    await expect(page).toHaveURL(/\/report$/);
    await expect(page.getByRole("heading", { name: "Repair report" })).toBeVisible();
    // The toast saying so is for the screen only.
    const toast = page.getByRole("status").filter({ hasText: "Fix and outcome recorded." });
    await expect(toast).toBeVisible();
    await page.emulateMedia({ media: "print" });
    await expect(toast).toBeHidden();
    await page.emulateMedia({ media: "screen" });
    await expect(page.getByTestId("report-outcome")).toHaveText("Powers on");
    await expect(page.getByTestId("report-findings")).toContainText("R362");
    await expect(page.getByTestId("report-findings")).toContainText("parts used: R362");
    await expect(page.getByRole("heading", { name: "Safety" })).toBeVisible();
    await expect(page.getByText(/licensed practice always come first/)).toBeVisible();
    await expect(page.getByText(/Never open or probe the mains side/)).toBeVisible();
    await expect(page.getByRole("button", { name: "Print or save as PDF" })).toBeVisible();

    // As printed: the readings, the finding, the fix, the outcome and the cautions; no navigation or buttons.
    await page.emulateMedia({ media: "print" });
    await expect(page.getByRole("banner")).toBeHidden();
    await expect(page.getByRole("navigation", { name: "Main" })).toBeHidden();
    await expect(page.getByRole("button", { name: "Print or save as PDF" })).toBeHidden();
    await expect(page.getByRole("link", { name: "Back to the run" })).toBeHidden();
    await expect(page.getByRole("heading", { name: "Repair report" })).toBeVisible();
    const readingsTable = page.getByRole("region", { name: "Readings" }).getByRole("table");
    await expect(readingsTable).toBeVisible();
    await expect(readingsTable.locator("tbody tr")).toHaveCount(taken);
    await expect(readingsTable).toContainText("EN_3V3_STBY");
    await expect(readingsTable).toContainText("missing");
    const findings = page.getByTestId("report-findings");
    await expect(findings).toBeVisible();
    await expect(findings).toContainText("R362 3.3 V standby enable resistor failed");
    await expect(findings).toContainText("Fix: Replace R362 (4K7)");
    await expect(findings).toContainText("outcome: Powers on");
    await expect(page.getByTestId("report-outcome")).toBeVisible();
    const safety = page.getByRole("region", { name: "Safety" });
    await expect(safety).toBeVisible();
    for (const title of [
      "Lithium battery",
      "Hot air and soldering",
      "Isopropyl alcohol",
      "Static discharge",
      "Mains adapters",
    ])
      await expect(safety).toContainText(title);
    await expect(safety).not.toContainText("Ultrasonic cleaning");
    await expect(safety.getByText(/local codes.*licensed practice always come first/)).toBeVisible();
    // Paper is white and the ink dark even when the screen follows a dark theme.
    const ink = () =>
      page.getByRole("heading", { name: "Repair report" }).evaluate((h) => getComputedStyle(h).color);
    await page.emulateMedia({ media: "screen", colorScheme: "dark" });
    expect(await ink()).not.toBe("rgb(0, 0, 0)");
    await page.emulateMedia({ media: "print", colorScheme: "dark" });
    expect(await ink()).toBe("rgb(0, 0, 0)");
    // Headless Chromium prints to PDF as the browser's print dialog would.
    const pdf = await page.pdf({ format: "A4" });
    expect(pdf.subarray(0, 5).toString("latin1")).toBe("%PDF-");
    expect(pdf.length).toBeGreaterThan(10_000);
  });

  test("the probe photo marks the point, and a change to resistance asks to remove power and battery first", async ({
    page,
  }) => {
    await signIn(page, DEMO.tech);
    await startRun(page, "order");
    // Power-up order up to the enable of the 3.3 V standby buck, whose series resistor R362 is open.
    const sim = simulateBoard(OM_5150_MAP, ATTACHED, { part: "r-en3" });
    const title = page.locator("#check-title");
    for (let i = 0; i < 8 && (await title.textContent())?.trim() !== "EN_3V3_STBY"; i++)
      await takeCheck(page, sim);
    await expect(title).toHaveText("EN_3V3_STBY");
    await expect(page.getByText("Voltage, board powered", { exact: true })).toBeVisible();

    const figure = page.getByTestId("probe-photo");
    const photo = figure.getByRole("img", { name: "Board photo: probe point for EN_3V3_STBY" });
    await expect(photo).toBeVisible();
    // The demo's drawn picture was served from storage and decoded: its full size, not a broken image.
    await expect.poll(() => photo.evaluate((img: HTMLImageElement) => img.naturalWidth)).toBe(640);
    await expect(figure).toContainText("R362 pad 2");
    const box = (await photo.boundingBox())!;
    const dot = (await figure.getByTestId("probe-marker").boundingBox())!;
    const at = DEMO_PHOTO_MARKERS["en-3v3-stby"];
    expect(Math.abs((dot.x + dot.width / 2 - box.x) / box.width - at.x)).toBeLessThan(0.01);
    expect(Math.abs((dot.y + dot.height / 2 - box.y) / box.height - at.y)).toBeLessThan(0.01);

    const input = page.getByLabel(/^Reading \(/);
    await expect(input).toBeFocused();
    await input.fill(sim.readingText("en-3v3-stby", "voltage"));
    await input.press("Enter");
    // Missing with its feeding net present: a resistance reading tells a short from the open resistor.
    await expect(page.getByText("Resistance to ground, power removed", { exact: true })).toBeVisible();
    await expect(title).toHaveText("EN_3V3_STBY");
    await expect(page.getByRole("alert").filter({ hasText: "Remove power and battery first" })).toBeVisible();
    await expect(page.getByRole("heading", { name: "Remove power and battery first" })).toBeVisible();
    await expect(page.getByLabel(/^Reading \(/)).toBeDisabled();
    await expect(figure.getByRole("img")).toBeVisible();
    await page.getByRole("button", { name: "Power and battery are removed" }).click();
    await expect(page.getByRole("heading", { name: "Remove power and battery first" })).toHaveCount(0);
    await expect(page.getByLabel(/^Reading \(/)).toBeEnabled();
    await expect(page.getByLabel(/^Reading \(/)).toBeFocused();
  });

  test("a run starts from the board page for members who run diagnoses", async ({ page, browser }) => {
    await signIn(page, DEMO.tech);
    await page.goto(`/boards/${BOARD}`);
    await page.getByRole("link", { name: "Start a run" }).click();
    await expect(page).toHaveURL(`/runs/new?boardId=${BOARD}`);
    await expect(page.getByLabel("Published map version")).toHaveValue("demo-map-om5150-v1");
    const desk = await browser.newPage();
    await signIn(desk, DEMO.desk);
    await desk.goto(`/boards/${BOARD}`);
    await expect(desk.getByRole("heading", { name: "Published versions" })).toBeVisible();
    await expect(desk.getByRole("link", { name: "Start a run" })).toHaveCount(0);
    await desk.close();
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
      if (strategy === "best")
        // The demo history's ended runs on this version are what `best` learned from.
        await expect(page.getByTestId("learned-from")).toContainText(
          /^Learned from \d{3,} ended runs in this shop\./,
        );
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

  test("a reading is one request whose answer carries the next step, as bench/walker.ts measures it", async ({
    page,
  }) => {
    await signIn(page, DEMO.tech);
    const runId = await startRun(page);
    const data: string[] = [];
    page.on("request", (r) => {
      if (r.url().includes(".data"))
        data.push(`${r.method()} ${new URL(r.url()).pathname}${new URL(r.url()).search}`);
    });
    // takeCheck waits until the history counts the new reading, i.e. until the screen shows the fresh run.
    await takeCheck(page, simulateBoard(OM_5150_MAP, ATTACHED, { part: "r-en3" }));
    await expect(page.locator("#check-title").or(page.locator("#finding-title"))).toBeVisible();
    expect(data[0]).toBe(`POST /runs/${runId}.data`);
    // No loader request was needed to show it (the walker's 4-second poll may come later: it reloads all).
    expect(data.filter((d) => d === `GET /runs/${runId}.data?_routes=routes%2Frun`)).toEqual([]);
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
