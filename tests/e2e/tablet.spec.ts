import { type Browser, expect, type Page, test } from "@playwright/test";
import { DEMO, signIn } from "./support";

// A 10-inch tablet at the bench: 1280×800 CSS pixels held landscape, 800×1280 portrait (common practice for
// 10-inch Android tablets; a 10.2-inch tablet is 810×1080). Every main page must fit the width without sideways
// scrolling, keep its navigation reachable, and the walker's reading field and its button must stay large
// enough to hit with a finger: at least 44×44 CSS px (WCAG 2.2 success criterion 2.5.5, Target Size).
const VIEWPORTS = [
  { name: "landscape", width: 1280, height: 800 },
  { name: "portrait", width: 800, height: 1280 },
] as const;

async function as(browser: Browser, email: string, viewport: { width: number; height: number }) {
  const page = await (await browser.newContext({ viewport, hasTouch: true })).newPage();
  await signIn(page, email);
  return page;
}

async function expectFitsWidth(page: Page, url: string) {
  const overflow = await page.evaluate(() => {
    const root = document.documentElement;
    return root.scrollWidth - root.clientWidth;
  });
  expect(overflow, `${url} scrolls sideways by ${overflow}px`).toBeLessThanOrEqual(1);
}

for (const vp of VIEWPORTS) {
  test(`main pages fit a 10-inch tablet held ${vp.name}`, async ({ browser }) => {
    test.setTimeout(120_000);
    const pages: Array<[string, string[]]> = [
      [DEMO.tech, ["/boards", "/boards/demo-board-om5150", "/runs", "/runs/new?boardId=demo-board-om5150"]],
      [DEMO.desk, ["/jobs", "/jobs/new"]],
      [DEMO.owner, ["/insights", "/insights/runs", "/insights/parts", "/settings"]],
    ];
    for (const [email, urls] of pages) {
      const page = await as(browser, email, vp);
      for (const url of urls) {
        await page.goto(url);
        await expect(page.getByRole("heading", { level: 1 })).toBeVisible();
        await expect(page.getByRole("navigation").getByRole("link", { name: "Boards" })).toBeVisible();
        await expectFitsWidth(page, url);
      }
      await page.context().close();
    }
  });

  test(`the walker's reading field is a finger-sized target, held ${vp.name}`, async ({ browser }) => {
    const page = await as(browser, DEMO.tech, vp);
    await page.goto("/runs/new?boardId=demo-board-om5150");
    await page.getByRole("radio", { name: "Charger and battery" }).check();
    await page.getByRole("button", { name: "Start the run" }).click();
    await expect(page).toHaveURL(/\/runs\/[a-z0-9]+$/);
    const input = page.getByLabel(/^Reading \(/);
    await expect(input).toBeFocused();
    await expectFitsWidth(page, "walker");
    const field = await input.boundingBox();
    expect(field?.height).toBeGreaterThanOrEqual(44);
    const save = page.getByRole("button", { name: /^Save reading/ });
    await expect(save).toBeVisible();
    const button = await save.boundingBox();
    expect(button?.height).toBeGreaterThanOrEqual(44);
    expect(button?.width).toBeGreaterThanOrEqual(44);
    await page.context().close();
  });
}
