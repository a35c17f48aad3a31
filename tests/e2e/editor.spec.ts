import { type Browser, expect, type Locator, type Page, test } from "@playwright/test";
import { DEMO, signIn } from "./support";

// A 1×1 PNG (PNG signature 89 50 4E 47 0D 0A 1A 0A, ISO/IEC 15948 §5.2).
const PNG_1PX = Buffer.from(
  "iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mNk+M9QDwADhgGAWjR9awAAAABJRU5ErkJggg==",
  "base64",
);

const node = (page: Page, text: string) => page.locator(".react-flow__node", { hasText: text });

async function drag(page: Page, from: Locator, to: Locator) {
  const a = (await from.boundingBox())!;
  const b = (await to.boundingBox())!;
  await page.mouse.move(a.x + a.width / 2, a.y + a.height / 2);
  await page.mouse.down();
  await page.mouse.move(b.x + b.width / 2, b.y + b.height / 2, { steps: 12 });
  await page.mouse.up();
}

async function connect(page: Page, fromText: string, toText: string) {
  await drag(
    page,
    node(page, fromText).locator(".react-flow__handle.source"),
    node(page, toText).locator(".react-flow__handle.target"),
  );
}

async function commit(page: Page, label: string, value: string) {
  const input = page.getByLabel(label, { exact: true });
  await input.fill(value);
  await input.press("Enter");
}

// New maps go on the smaller demo board, so runs on the Marlow 15 demo map elsewhere in the suite are unaffected.
async function newMapOnDemoBoard(page: Page, name: string) {
  await page.goto("/boards");
  await page.getByRole("link", { name: /Marlow 13/ }).click();
  await page.getByLabel("New map name").fill(name);
  await page.getByRole("button", { name: "Create map" }).click();
  await expect(page).toHaveURL(/\/maps\//);
  await expect(page.getByRole("heading", { level: 1 })).toHaveText(name);
}

const saved = (page: Page) => expect(page.getByTestId("save-status")).toHaveText(/All changes saved/);

test("a lead builds a small map from scratch, fixes a validation error and publishes it", async ({
  page,
}) => {
  await signIn(page, DEMO.lead);
  await newMapOnDemoBoard(page, `Bench map ${Date.now()}`);

  await page.getByRole("button", { name: "Source", exact: true }).click();
  await commit(page, "Name", "Bench charger");
  await page.getByRole("button", { name: "Rail", exact: true }).click();
  await commit(page, "Name", "VIN_MAIN");
  await commit(page, "Voltage", "19V ±5%");
  await commit(page, "Nominal voltage", "19V");
  await page.getByRole("button", { name: "Part", exact: true }).click();
  await commit(page, "Name", "Buck regulator");
  await commit(page, "Reference designator", "U1");
  await page.getByRole("button", { name: "Rail", exact: true }).click();
  await commit(page, "Name", "OUT_3V3");
  await page.getByRole("button", { name: "Fit view", exact: true }).click();
  await page.waitForTimeout(400);

  await connect(page, "Bench charger", "VIN_MAIN");
  await expect(page.locator(".react-flow__edge")).toHaveCount(1);
  await connect(page, "VIN_MAIN", "Buck regulator");
  await expect(page.locator(".react-flow__edge")).toHaveCount(2);
  await connect(page, "Buck regulator", "OUT_3V3");
  await expect(page.locator(".react-flow__edge")).toHaveCount(3);
  // A rail cannot be connected straight to another rail, nor a source straight to a part: no edge appears.
  await connect(page, "VIN_MAIN", "OUT_3V3");
  await connect(page, "Bench charger", "Buck regulator");
  await expect(page.locator(".react-flow__edge")).toHaveCount(3);

  // Auto-layout puts the power-up order left to right.
  await page.getByRole("button", { name: "Auto-layout" }).click();
  await expect(page.getByTestId("map-editor")).toHaveAttribute("data-layout-ms", /\d+/);
  const xs: number[] = [];
  for (const name of ["Bench charger", "VIN_MAIN", "Buck regulator", "OUT_3V3"])
    xs.push((await node(page, name).boundingBox())!.x);
  expect([...xs].sort((a, b) => a - b)).toEqual(xs);
  expect(new Set(xs).size).toBe(4);

  // OUT_3V3 has no expected reading yet: the engine reports it and publishing is refused.
  const issue = page.getByTestId("issues").getByRole("button", { name: /OUT_3V3.*no expected range/ });
  await expect(issue).toBeVisible();
  await expect(node(page, "OUT_3V3").locator(".rw-node")).toHaveAttribute("data-mark", "error");
  await expect(page.getByRole("button", { name: "Publish" })).toBeDisabled();
  await issue.click();
  await expect(page.getByRole("region", { name: /Edit rail OUT_3V3/ })).toBeVisible();
  await commit(page, "Voltage", "3.3");
  await expect(page.getByText(/Could not read|expected a voltage/).first()).toBeVisible();
  await commit(page, "Voltage", "3.3V ±5%");
  await expect(page.getByRole("heading", { name: /Checks/ })).toContainText("no errors");
  await saved(page);

  await page.getByLabel("Change note").fill("First bench map");
  await page.getByRole("button", { name: "Publish" }).click();
  await expect(page.getByText("Published version 1.")).toBeVisible();
  await expect(page.getByRole("region", { name: "Versions" })).toContainText("First bench map");

  // Undo/redo and duplicate through the keyboard.
  await node(page, "Buck regulator").click();
  await page.keyboard.press("Control+d");
  await expect(node(page, "Buck regulator copy")).toBeVisible();
  await page.keyboard.press("Control+z");
  await expect(node(page, "Buck regulator copy")).toHaveCount(0);
  await page.keyboard.press("Control+Shift+z");
  await expect(node(page, "Buck regulator copy")).toBeVisible();
  await page.keyboard.press("Delete");
  await expect(node(page, "Buck regulator copy")).toHaveCount(0);
  await page.keyboard.press("Control+k");
  await page.getByLabel(/Find a node/).fill("OUT_3");
  await page.keyboard.press("Enter");
  await expect(page.getByRole("region", { name: /Edit rail OUT_3V3/ })).toBeVisible();
  await saved(page);
});

test("the desk sees a map read-only and the server refuses its saves", async ({ page }) => {
  await signIn(page, DEMO.desk);
  await page.goto("/boards");
  await page.getByRole("link", { name: /Marlow 15/ }).click();
  await page.getByRole("region", { name: "Maps" }).getByRole("link").first().click();
  await expect(page.getByTestId("save-status")).toHaveText(/Read only/);
  await expect(page.getByRole("button", { name: "Rail", exact: true })).toHaveCount(0);
  await expect(page.getByRole("button", { name: "Publish" })).toHaveCount(0);
  await page.locator(".react-flow__node-rail").first().click();
  await expect(page.getByLabel("Name", { exact: true })).toHaveAttribute("readonly", "");
  const mapUrl = new URL(page.url()).pathname;
  const res = await page.request.post(mapUrl, {
    form: { intent: "save", revision: "1", changes: JSON.stringify([{ op: "remove-node", id: "x" }]) },
  });
  expect(res.status()).toBe(403);
});

async function openAs(browser: Browser, email: string, path: string) {
  const ctx = await browser.newContext();
  const page = await ctx.newPage();
  await signIn(page, email);
  await page.goto(path);
  await expect(page.getByTestId("map-editor")).toBeVisible();
  return { ctx, page };
}

test("a second lead's concurrent edit is reported and the unsaved change is kept", async ({
  browser,
  page,
}) => {
  await signIn(page, DEMO.lead);
  await newMapOnDemoBoard(page, `Shared map ${Date.now()}`);
  const path = new URL(page.url()).pathname;
  const other = await openAs(browser, DEMO.owner, path);

  // The owner saves first ...
  await other.page.getByRole("button", { name: "Source", exact: true }).click();
  await commit(other.page, "Name", "Owner source");
  await saved(other.page);

  // ... then the lead, still on revision 0, edits and is told.
  await page.getByRole("button", { name: "Rail", exact: true }).click();
  await commit(page, "Name", "LEAD_RAIL");
  await expect(page.getByRole("alert")).toContainText("Another lead changed this map");
  await expect(page.getByTestId("save-status")).toHaveText(/another lead changed this map/);
  await expect(node(page, "LEAD_RAIL")).toBeVisible();
  await expect(page.getByRole("alert")).toContainText("LEAD_RAIL");

  await page.getByRole("button", { name: "Reload their version and re-apply my changes" }).click();
  await expect(node(page, "Owner source")).toBeVisible();
  await expect(node(page, "LEAD_RAIL")).toBeVisible();
  await saved(page);
  await other.page.reload();
  await expect(node(other.page, "LEAD_RAIL")).toBeVisible();
  await other.ctx.close();
});

test("importing a malformed or invalid file is refused and changes nothing", async ({ page }) => {
  await signIn(page, DEMO.lead);
  await newMapOnDemoBoard(page, `Import map ${Date.now()}`);
  const file = page.getByLabel("Map file");
  await file.setInputFiles({
    name: "broken.json",
    mimeType: "application/json",
    buffer: Buffer.from("{ oops"),
  });
  await expect(page.getByRole("alert")).toContainText(/Refused: .*not valid JSON/);
  await expect(page.getByRole("button", { name: "Replace the draft with this map" })).toHaveCount(0);
  const invalid = {
    format: "railwise.map",
    version: 1,
    settings: { strategy: "best" },
    nodes: [
      {
        id: "r1",
        kind: "rail",
        name: "FLOATING",
        nominalV: 5,
        tolerancePct: 5,
        expected: {},
        probe: { text: "", seconds: 10, needsDisassembly: false },
      },
    ],
    edges: [],
  };
  await file.setInputFiles({
    name: "invalid.json",
    mimeType: "application/json",
    buffer: Buffer.from(JSON.stringify(invalid)),
  });
  await expect(page.getByRole("alert")).toContainText(/error/);
  await expect(page.getByRole("alert")).toContainText("FLOATING");
  // The server refuses it too when sent directly.
  const path = new URL(page.url()).pathname;
  const res = await page.request.post(path, {
    form: { intent: "import", revision: "0", json: JSON.stringify(invalid) },
  });
  expect(res.status()).toBe(422);
  await page.reload();
  await expect(page.locator(".react-flow__node")).toHaveCount(0);
  await expect(page.getByTestId("save-status")).toHaveText(/revision 0/);

  // A valid export of the demo map imports after its preview.
  const exported = await page.request.get("/maps/demo-map-om5130/export?version=1");
  await file.setInputFiles({
    name: "good.json",
    mimeType: "application/json",
    buffer: Buffer.from(await exported.text()),
  });
  await expect(page.getByTestId("import-preview")).toContainText(/nodes/);
  await page.getByRole("button", { name: "Replace the draft with this map" }).click();
  await expect(page.getByText("Imported the map into the draft.")).toBeVisible();
  await expect(page.locator(".react-flow__node").first()).toBeVisible();
});

test("a photo upload shows its probe marker, and a text file named .png is refused", async ({ page }) => {
  await signIn(page, DEMO.lead);
  await newMapOnDemoBoard(page, `Photo map ${Date.now()}`);
  await page.getByRole("button", { name: "Rail", exact: true }).click();
  await commit(page, "Name", "PHOTO_RAIL");
  const photo = page.getByLabel(/Board photo \(JPEG, PNG or WebP/);
  await photo.setInputFiles({
    name: "board.png",
    mimeType: "image/png",
    buffer: Buffer.from("just some text"),
  });
  await expect(page.getByRole("alert").filter({ hasText: "upload a JPEG, PNG or WebP photo" })).toBeVisible();
  await photo.setInputFiles({ name: "board.png", mimeType: "image/png", buffer: PNG_1PX });
  const marker = page.getByTestId("probe-marker");
  await expect(marker).toBeVisible();
  await expect(page.getByText("Marker at 50% across, 50% down.")).toBeVisible();
  const img = page.getByRole("button", { name: /Board photo: click to place/ });
  // Measure only once the photo has loaded: before that its box is a few pixels high and the click lands elsewhere.
  await expect
    .poll(() =>
      img.evaluate((el) => {
        const pic = el instanceof HTMLImageElement ? el : el.querySelector("img");
        return !!pic && pic.complete && pic.naturalWidth > 0 && pic.getBoundingClientRect().height > 20;
      }),
    )
    .toBe(true);
  const box = (await img.boundingBox())!;
  await img.click({ position: { x: box.width * 0.25, y: box.height * 0.75 } });
  // The marker is saved through the autosave round trip, which is slow on a loaded machine.
  await expect(page.getByText("Marker at 25% across, 75% down.")).toBeVisible({ timeout: 30_000 });
  await saved(page);
  await page.reload();
  await node(page, "PHOTO_RAIL").click();
  await expect(page.getByTestId("probe-marker")).toBeVisible();
  await expect(page.getByText("Marker at 25% across, 75% down.")).toBeVisible();
});
