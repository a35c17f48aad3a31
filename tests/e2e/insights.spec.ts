import { readFile } from "node:fs/promises";
import { expect, test } from "@playwright/test";
import { parse } from "csv-parse/sync";
import { DEMO, signIn, waitForHydration } from "./support";

// Needs the demo history (seedDemoHistory, called by the demo seed) so the hot spots are not empty.
test("a lead filters hot spots by board and exports the same rows as CSV", async ({ page }) => {
  await signIn(page, DEMO.lead);
  await page.getByRole("link", { name: "Insights", exact: true }).click();
  await expect(page).toHaveURL(/\/insights/);
  await expect(page.getByRole("heading", { name: "Hot spots" })).toBeVisible();

  // The URL changes before the filtered page is drawn, so wait for the row count to change too
  // (the demo history has runs of both boards, so filtering to one always drops rows).
  const rowCount = page.getByText(/\d+ rows · page/);
  const unfiltered = (await rowCount.textContent()) ?? "";
  await page
    .getByRole("form", { name: "Filters" })
    .getByLabel("Board")
    .selectOption({ label: "OM-5150 rev C · Marlow 15" });
  await page.getByRole("button", { name: "Apply filters" }).click();
  await expect(page).toHaveURL(/board=demo-board-om5150/);
  await expect(rowCount).not.toHaveText(unfiltered);

  const table = page.getByRole("table", { name: /Hot spots by board and node/ });
  const summary = await rowCount.textContent();
  const total = Number(summary?.match(/^(\d+) rows/)?.[1]);
  expect(total).toBeGreaterThan(0);
  // What the page shows on its first page: board and the two counts of each row, in ranked order.
  const shown = await table.locator("tbody tr").evaluateAll((trs) =>
    trs.map((tr) => {
      const cells = [...tr.querySelectorAll("td")].map((td) => td.textContent?.trim() ?? "");
      return [cells[0], cells[3], cells[4]];
    }),
  );
  expect(shown.every(([board]) => board === "OM-5150 rev C")).toBe(true);

  const downloading = page.waitForEvent("download");
  await page.getByRole("link", { name: "Export CSV" }).click();
  const download = await downloading;
  expect(download.suggestedFilename()).toMatch(/^railwise-hot-spots-.*\.csv$/);
  const rows = parse(await readFile((await download.path())!, "utf8"), { columns: true }) as Array<
    Record<string, string>
  >;
  expect(rows).toHaveLength(total);
  expect(rows.every((r) => r.Board === "OM-5150 rev C")).toBe(true);
  expect(
    rows
      .slice(0, shown.length)
      .map((r) => [r.Board, r["Runs ending here"], r["Runs on versions with the node"]]),
  ).toEqual(shown);
});

test("technicians and the desk do not see insights", async ({ page }) => {
  await signIn(page, DEMO.tech);
  await expect(page.getByRole("link", { name: "Insights", exact: true })).toHaveCount(0);
  const res = await page.goto("/insights");
  expect(res?.status()).toBe(403);
});

test("a lead picks one map version of a board, and the shaded map keeps it", async ({ page }) => {
  await signIn(page, DEMO.lead);
  await page.goto("/insights");
  const form = page.getByRole("form", { name: "Filters" });
  // The narrowing below is the script's: pick the board once React owns the form.
  await waitForHydration(page, "#f-board");
  await form.getByLabel("Board").selectOption({ label: "OM-5150 rev C · Marlow 15" });
  // Narrowed to the chosen board's versions.
  const version = form.getByLabel("Map version");
  await expect(version.locator("optgroup")).toHaveCount(1);
  await expect(version.locator("optgroup")).toHaveAttribute("label", "OM-5150 rev C · Marlow 15");
  await version.selectOption({ label: "Power-up, charger and battery · version 1" });
  await page.getByRole("button", { name: "Apply filters" }).click();
  await expect(page).toHaveURL(/board=demo-board-om5150/);
  await expect(page).toHaveURL(/version=demo-map-om5150-v1/);
  await expect(form.getByLabel("Map version")).toHaveValue("demo-map-om5150-v1");
  const shaded = page.getByRole("region", { name: "Maps shaded by failure rate" }).getByRole("link");
  await expect(shaded).toHaveCount(1);
  await expect(shaded).toHaveAttribute(
    "href",
    /^\/insights\/map\/demo-map-om5150-v1\?.*version=demo-map-om5150-v1/,
  );
  await shaded.click();
  await expect(page).toHaveURL(/\/insights\/map\/demo-map-om5150-v1\?.*version=demo-map-om5150-v1/);
  await expect(page.getByRole("checkbox", { name: "Only runs on version 1" })).toBeChecked();
});

test("parts to stock name the board, reference, value and package, on the page and in the CSV", async ({
  page,
}) => {
  await signIn(page, DEMO.lead);
  await page.goto("/insights/parts?board=demo-board-om5150");
  const table = page.getByRole("table", { name: /Parts used per board and reference designator/ });
  const first = (await table.locator("tbody tr").first().locator("td").allTextContents()).slice(0, 5);

  const downloading = page.waitForEvent("download");
  await page.getByRole("link", { name: "Export CSV" }).click();
  const rows = parse(await readFile((await (await downloading).path())!, "utf8"), { columns: true }) as Array<
    Record<string, string>
  >;
  expect(rows.length).toBeGreaterThan(5);
  expect(rows.every((r) => r.Board === "OM-5150 rev C")).toBe(true);
  // The page's first row is the CSV's first row (both ranked by the forecast).
  const top = rows[0];
  expect(first).toEqual([top.Board, top.Reference, top.Part, top.Value || "—", top.Package || "—"]);
  expect(rows.find((r) => r.Reference === "R362")).toMatchObject({
    Part: "3.3 V standby enable resistor",
    Value: "4K7",
    Package: "0201",
  });
});
