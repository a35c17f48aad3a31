import { readFile } from "node:fs/promises";
import { expect, test } from "@playwright/test";
import { parse } from "csv-parse/sync";
import { DEMO, signIn } from "./support";

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
