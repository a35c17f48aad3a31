import { type Browser, expect, type Locator, type Page, test } from "@playwright/test";
import { DEMO, signIn } from "./support";

// A 1×1 PNG (PNG signature 89 50 4E 47 0D 0A 1A 0A, ISO/IEC 15948 §5.2).
const PNG_1PX = Buffer.from(
  "iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mNk+M9QDwADhgGAWjR9awAAAABJRU5ErkJggg==",
  "base64",
);

const node = (page: Page, text: string) => page.locator(".react-flow__node", { hasText: text });

// The target is measured once the drag has started, and the pointer rests on it a moment before letting go:
// on a busy machine the editor may still be settling (a save re-rendering, the view moving) when the drag
// begins, and the connection line must have caught up with the pointer when the button is released.
async function drag(page: Page, from: Locator, to: Locator) {
  await from.hover();
  const a = (await from.boundingBox())!;
  await page.mouse.move(a.x + a.width / 2, a.y + a.height / 2);
  await page.mouse.down();
  await page.mouse.move(a.x + a.width / 2 + 8, a.y + a.height / 2 + 8, { steps: 3 });
  const b = (await to.boundingBox())!;
  await page.mouse.move(b.x + b.width / 2, b.y + b.height / 2, { steps: 12 });
  await page.mouse.move(b.x + b.width / 2 + 1, b.y + b.height / 2, { steps: 2 });
  await page.waitForTimeout(50);
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

// A small valid map with stored positions: charger → input rail → two regulators → their rails.
const probe = { text: "test pad", seconds: 20, needsDisassembly: false };
const railNode = (id: string, name: string, v: number, x: number, y: number) => ({
  id,
  kind: "rail",
  name,
  nominalV: v,
  tolerancePct: 5,
  expected: { voltage: { nominal: v, tolerancePct: 5 } },
  probe,
  position: { x, y },
});
const partNode = (id: string, name: string, refdes: string, x: number, y: number) => ({
  id,
  kind: "part",
  name,
  partType: "regulator",
  refdes,
  fixes: [{ id: "replace", kind: "replace", label: `Replace ${refdes}` }],
  position: { x, y },
});
const SMALL_MAP = {
  format: "railwise.map",
  version: 1,
  settings: { strategy: "best" },
  nodes: [
    { id: "chg", kind: "source", name: "Bench charger", sourceKind: "charger", position: { x: 0, y: 100 } },
    railNode("vin", "VIN_MAIN", 19, 260, 100),
    partNode("u1", "Buck regulator", "U1", 520, 0),
    partNode("u2", "LDO regulator", "U2", 520, 200),
    railNode("v5", "OUT_5V", 5, 780, 0),
    railNode("v3", "OUT_3V3", 3.3, 780, 200),
  ],
  edges: [
    { id: "chg--vin", from: "chg", to: "vin", kind: "supplies" },
    { id: "vin--u1", from: "vin", to: "u1", kind: "feeds" },
    { id: "vin--u2", from: "vin", to: "u2", kind: "feeds" },
    { id: "u1--v5", from: "u1", to: "v5", kind: "drives" },
    { id: "u2--v3", from: "u2", to: "v3", kind: "drives" },
  ],
};
type Pos = { x: number; y: number };

/** A new map holding SMALL_MAP at revision 1, sent through the editor's own action. */
async function smallMapAt(page: Page, name: string) {
  await newMapOnDemoBoard(page, name);
  const path = new URL(page.url()).pathname;
  const res = await page.request.post(path, {
    form: { intent: "import", revision: "0", json: JSON.stringify(SMALL_MAP) },
  });
  expect(res.status()).toBe(200);
  await page.reload();
  await expect(page.locator(".react-flow__node")).toHaveCount(SMALL_MAP.nodes.length);
  return path;
}

async function storedPositions(page: Page, path: string): Promise<Record<string, Pos>> {
  const doc = (await (await page.request.get(`${path}/export`)).json()) as {
    nodes: Array<{ id: string; position: Pos }>;
  };
  return Object.fromEntries(doc.nodes.map((n) => [n.id, n.position]));
}

test("nodes show their power-up stage, and auto-layout puts later stages further right", async ({ page }) => {
  await signIn(page, DEMO.lead);
  await smallMapAt(page, `Stage map ${Date.now()}`);
  const stageOf = (name: string) => node(page, name).locator(".rw-node");
  await expect(stageOf("Bench charger")).toHaveAttribute("data-stage", "0");
  await expect(stageOf("VIN_MAIN")).toHaveAttribute("data-stage", "1");
  await expect(stageOf("LDO regulator")).toHaveAttribute("data-stage", "2");
  await expect(stageOf("OUT_3V3")).toHaveAttribute("data-stage", "3");
  await expect(node(page, "OUT_3V3")).toContainText("stage 3");
  await page.getByRole("button", { name: "Auto-layout" }).click();
  await expect(page.getByTestId("map-editor")).toHaveAttribute("data-layout-ms", /\d+/);
  const x = async (name: string) => (await node(page, name).boundingBox())!.x;
  expect(await x("Buck regulator")).toBe(await x("LDO regulator"));
  expect(await x("OUT_5V")).toBe(await x("OUT_3V3"));
  expect(await x("Bench charger")).toBeLessThan(await x("VIN_MAIN"));
  expect(await x("VIN_MAIN")).toBeLessThan(await x("LDO regulator"));
  expect(await x("LDO regulator")).toBeLessThan(await x("OUT_3V3"));
});

test("a part's safety notes and an edited fix label are saved", async ({ page }) => {
  await signIn(page, DEMO.lead);
  await smallMapAt(page, `Safety map ${Date.now()}`);
  await node(page, "Buck regulator").click();
  const notes = page.getByLabel("Safety notes", { exact: true });
  await notes.fill("Disconnect the battery before hot air on U1.");
  await notes.blur();
  const label = page.getByLabel("Label of fix 1");
  await label.fill("");
  await label.press("Enter");
  await expect(page.getByRole("alert").filter({ hasText: "Describe the fix." })).toBeVisible();
  await label.fill("Replace U1 and check its input capacitor");
  await label.press("Enter");
  await saved(page);
  await page.reload();
  await node(page, "Buck regulator").click();
  await expect(page.getByLabel("Safety notes", { exact: true })).toHaveValue(
    "Disconnect the battery before hot air on U1.",
  );
  await expect(page.getByLabel("Label of fix 1")).toHaveValue("Replace U1 and check its input capacitor");
});

/** A node's box once the canvas has stopped moving (the view settles just after a load or reload). */
async function settledBox(page: Page, name: string) {
  let last = await node(page, name).boundingBox();
  for (let i = 0; i < 30; i++) {
    await page.waitForTimeout(100);
    const now = await node(page, name).boundingBox();
    if (last && now && Math.abs(now.x - last.x) < 0.5 && Math.abs(now.y - last.y) < 0.5) return now;
    last = now;
  }
  if (!last) throw new Error(`${name} has no box`);
  return last;
}

test("several nodes selected by Ctrl-click or a Shift box move together and stay moved after a reload", async ({
  page,
}) => {
  await signIn(page, DEMO.lead);
  const path = await smallMapAt(page, `Group map ${Date.now()}`);
  const before = await storedPositions(page, path);

  // Ctrl-click two regulators, then drag one of them: both move by the same amount, the rest stay.
  await node(page, "Buck regulator").click();
  await node(page, "LDO regulator").click({ modifiers: ["Control"] });
  await expect(page.getByText("2 nodes selected.")).toBeVisible();
  const box = await settledBox(page, "LDO regulator");
  await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
  await page.mouse.down();
  await page.mouse.move(box.x + box.width / 2 + 60, box.y + box.height / 2 + 90, { steps: 10 });
  await page.mouse.up();
  await saved(page);
  await page.reload();
  await expect(page.locator(".react-flow__node")).toHaveCount(SMALL_MAP.nodes.length);
  const after = await storedPositions(page, path);
  const dx = after.u1.x - before.u1.x;
  const dy = after.u1.y - before.u1.y;
  expect(Math.abs(dx)).toBeGreaterThan(10);
  expect(Math.abs(dy)).toBeGreaterThan(10);
  expect(after.u2).toEqual({ x: before.u2.x + dx, y: before.u2.y + dy });
  for (const id of ["chg", "vin", "v5", "v3"]) expect(after[id], id).toEqual(before[id]);

  // Shift-drag a box around the two output rails, then drag them as one.
  const a = await settledBox(page, "OUT_5V");
  const b = await settledBox(page, "OUT_3V3");
  const left = Math.min(a.x, b.x) - 12;
  const top = Math.min(a.y, b.y) - 12;
  const right = Math.max(a.x + a.width, b.x + b.width) + 12;
  const bottom = Math.max(a.y + a.height, b.y + b.height) + 12;
  await page.keyboard.down("Shift");
  await page.mouse.move(left, top);
  await page.mouse.down();
  await page.mouse.move(right, bottom, { steps: 10 });
  await page.mouse.up();
  await page.keyboard.up("Shift");
  await expect(page.getByText("2 nodes selected.")).toBeVisible();
  await page.mouse.move(a.x + a.width / 2, a.y + a.height / 2);
  await page.mouse.down();
  await page.mouse.move(a.x + a.width / 2 + 80, a.y + a.height / 2 + 40, { steps: 10 });
  await page.mouse.up();
  await saved(page);
  await page.reload();
  await expect(page.locator(".react-flow__node")).toHaveCount(SMALL_MAP.nodes.length);
  const moved = await storedPositions(page, path);
  const ex = moved.v5.x - after.v5.x;
  const ey = moved.v5.y - after.v5.y;
  expect(Math.abs(ex)).toBeGreaterThan(10);
  expect(moved.v3).toEqual({ x: after.v3.x + ex, y: after.v3.y + ey });
  for (const id of ["chg", "vin", "u1", "u2"]) expect(moved[id], id).toEqual(after[id]);
});

test("a published version opens read-only and exports its own picture as PNG and SVG", async ({ page }) => {
  await signIn(page, DEMO.lead);
  const path = await smallMapAt(page, `Picture map ${Date.now()}`);
  const published = await page.request.post(path, {
    form: { intent: "publish", revision: "1", note: "Picture test" },
  });
  expect(published.status()).toBe(200);
  // The draft moves on after version 1; the picture of version 1 must not show the change.
  const extra = { ...railNode("later", "DRAFT_ONLY_RAIL", 1.8, 1040, 0) };
  const edited = await page.request.post(path, {
    form: {
      intent: "save",
      revision: "1",
      changes: JSON.stringify([{ op: "put-node", node: extra }]),
    },
  });
  expect(edited.status()).toBe(200);
  await page.reload();
  await expect(node(page, "DRAFT_ONLY_RAIL")).toBeVisible();

  await page.getByRole("link", { name: "View version 1" }).click();
  await expect(page).toHaveURL(/\?version=1$/);
  await expect(page.getByRole("region", { name: "Published version" })).toContainText("Picture test");
  await expect(page.getByTestId("save-status")).toHaveText(/Published version 1: read only/);
  await expect(page.locator(".react-flow__node")).toHaveCount(SMALL_MAP.nodes.length);
  await expect(page.getByRole("button", { name: "Auto-layout" })).toHaveCount(0);

  const download = async (format: "PNG" | "SVG") => {
    const [file] = await Promise.all([
      page.waitForEvent("download"),
      page.getByRole("button", { name: format, exact: true }).click(),
    ]);
    const stream = await file.createReadStream();
    const chunks: Buffer[] = [];
    for await (const c of stream) chunks.push(c as Buffer);
    return { name: file.suggestedFilename(), bytes: Buffer.concat(chunks) };
  };
  const png = await download("PNG");
  expect(png.name).toMatch(/-v1\.png$/);
  expect(png.bytes.length).toBeGreaterThan(1000);
  // PNG signature 89 50 4E 47 0D 0A 1A 0A (ISO/IEC 15948 §5.2).
  expect(png.bytes.subarray(0, 8).toString("hex")).toBe("89504e470d0a1a0a");
  const svg = await download("SVG");
  expect(svg.name).toMatch(/-v1\.svg$/);
  const text = svg.bytes.toString("utf8");
  expect(text.startsWith("<svg")).toBe(true);
  expect(text).toContain('xmlns="http://www.w3.org/2000/svg"');
  expect(text).toContain("OUT_3V3");
  expect(text).not.toContain("DRAFT_ONLY_RAIL");

  // The compare page links to each side; the draft opens editable again.
  await page.goto(`${path}/compare?a=1&b=draft`);
  await page.getByRole("link", { name: /Open version 1/ }).click();
  await expect(page.getByRole("region", { name: "Published version" })).toBeVisible();
  await page.getByRole("link", { name: "Back to the draft" }).click();
  await expect(node(page, "DRAFT_ONLY_RAIL")).toBeVisible();
  await expect(page.getByTestId("save-status")).toHaveText(/All changes saved/);
});

test("a new draft from a version asks before dropping changes, and does not blame another lead", async ({
  page,
}) => {
  await signIn(page, DEMO.lead);
  const path = await smallMapAt(page, `Restart map ${Date.now()}`);
  const published = await page.request.post(path, {
    form: { intent: "publish", revision: "1", note: "Restart test" },
  });
  expect(published.status()).toBe(200);
  await page.reload();
  const versions = page.getByRole("region", { name: "Versions" });

  // A saved change that is in no version: the server asks first.
  await page.getByRole("button", { name: "Rail", exact: true }).click();
  await commit(page, "Name", "LATE_RAIL");
  await saved(page);
  await versions.getByRole("button", { name: "New draft from v1" }).click();
  await expect(versions.getByRole("alert")).toContainText("in no published version");
  await versions.getByRole("button", { name: "Keep the draft" }).click();
  await expect(node(page, "LATE_RAIL")).toBeVisible();

  // An edit not yet saved: the page asks without waiting for the server.
  await node(page, "LATE_RAIL").click();
  await commit(page, "Name", "LATER_RAIL");
  await versions.getByRole("button", { name: "New draft from v1" }).click();
  await expect(versions.getByRole("alert")).toContainText(/unsaved change|in no published version/);
  await versions.getByRole("button", { name: "Replace the draft with v1" }).click();
  await expect(versions.getByRole("status")).toHaveText("The draft now starts from version 1.");
  await expect(node(page, "LATER_RAIL")).toHaveCount(0);
  await expect(page.getByText(/Another lead changed this map/)).toHaveCount(0);
  await saved(page);
  await page.reload();
  await expect(page.locator(".react-flow__node")).toHaveCount(SMALL_MAP.nodes.length);
});
