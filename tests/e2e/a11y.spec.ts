import AxeBuilder from "@axe-core/playwright";
import { expect, type Page, test } from "@playwright/test";
import { OM_5150_MAP } from "../../seed/maps/om-5150";
import { simulateBoard } from "../support/bench-sim";
import { DEMO, signIn, uniqueEmail, waitForEmail } from "./support";

// Every main page, for a role that may open it, checked by axe against WCAG 2 A and AA: no serious or critical
// violation. Then a run walked with the keyboard alone (Tab, Enter, Space, arrows and typing; no clicks).

const BOARD = "demo-board-om5150";

async function axe(page: Page) {
  await page.waitForLoadState("load");
  const result = await new AxeBuilder({ page }).withTags(["wcag2a", "wcag2aa"]).analyze();
  return result.violations
    .filter((v) => v.impact === "serious" || v.impact === "critical")
    .map((v) => ({
      rule: v.id,
      impact: v.impact,
      help: v.help,
      nodes: v.nodes.slice(0, 5).map((n) => n.target.join(" ")),
    }));
}

/** The first link on the page whose href starts with `prefix` followed by an id. */
async function firstLink(page: Page, prefix: string) {
  const hrefs = await page
    .locator(`a[href^="${prefix}"]`)
    .evaluateAll((as) => as.map((a) => a.getAttribute("href")!));
  const href = hrefs.find((h) => new RegExp(`^${prefix}(?!new\\b)[A-Za-z0-9_-]+(\\?.*)?$`).test(h));
  expect(href, `a link to ${prefix}… on ${page.url()}`).toBeTruthy();
  return href!;
}

type Visit = { name: string; role: keyof typeof DEMO | null; open: (page: Page) => Promise<void> };
const go = (path: string) => async (page: Page) => {
  await page.goto(path);
};

async function startRunByMouse(page: Page) {
  await page.goto(`/runs/new?boardId=${BOARD}`);
  await page.getByRole("radio", { name: "Charger and battery" }).check();
  await page.getByRole("button", { name: "Start the run" }).click();
  await expect(page).toHaveURL(/\/runs\/[a-z0-9]+$/);
}

const VISITS: Visit[] = [
  { name: "landing", role: null, open: go("/") },
  { name: "login", role: null, open: go("/login") },
  { name: "signup", role: null, open: go("/signup") },
  { name: "boards", role: "lead", open: go("/boards") },
  { name: "board", role: "lead", open: go(`/boards/${BOARD}`) },
  {
    name: "map editor",
    role: "lead",
    open: async (page) => {
      await page.goto(`/boards/${BOARD}`);
      await page.goto(await firstLink(page, "/maps/"));
      await expect(page.getByTestId("map-editor")).toBeVisible();
    },
  },
  { name: "runs", role: "lead", open: go("/runs") },
  { name: "new run", role: "tech", open: go(`/runs/new?boardId=${BOARD}`) },
  {
    name: "walker",
    role: "tech",
    open: async (page) => {
      await startRunByMouse(page);
      await expect(page.getByRole("heading", { name: /^Readings \(0\)$/ })).toBeVisible();
    },
  },
  {
    name: "report",
    role: "lead",
    open: async (page) => {
      await page.goto("/runs");
      await page.goto(`${await firstLink(page, "/runs/")}/report`);
    },
  },
  { name: "jobs", role: "desk", open: go("/jobs") },
  {
    name: "job",
    role: "desk",
    open: async (page) => {
      await page.goto("/jobs");
      await page.goto(await firstLink(page, "/jobs/"));
    },
  },
  { name: "new job", role: "desk", open: go("/jobs/new") },
  { name: "insights", role: "owner", open: go("/insights") },
  { name: "insights runs", role: "owner", open: go("/insights/runs") },
  { name: "insights parts", role: "owner", open: go("/insights/parts") },
  {
    name: "insights map",
    role: "owner",
    open: async (page) => {
      await page.goto("/insights");
      await page.goto(await firstLink(page, "/insights/map/"));
    },
  },
  {
    name: "customer",
    role: "owner",
    open: async (page) => {
      await page.goto("/jobs");
      await page.goto(await firstLink(page, "/jobs/"));
      await page.goto(await firstLink(page, "/customers/"));
      await expect(page).toHaveURL(/\/customers\/[A-Za-z0-9_-]+$/);
    },
  },
  {
    name: "quote builder",
    role: "desk",
    open: async (page) => {
      await page.goto("/jobs");
      await page.goto(`${await firstLink(page, "/jobs/")}/quote`);
      await expect(page).toHaveURL(/\/jobs\/[A-Za-z0-9_-]+\/quote$/);
    },
  },
  {
    name: "map compare",
    role: "lead",
    open: async (page) => {
      await page.goto(`/boards/${BOARD}`);
      await page.goto(`${await firstLink(page, "/maps/")}/compare`);
      await expect(page).toHaveURL(/\/maps\/[A-Za-z0-9_-]+\/compare/);
    },
  },
  { name: "forgot password", role: null, open: go("/forgot-password") },
  {
    name: "reset password (a real link)",
    role: null,
    open: async (page) => {
      // Asking for a link changes nothing until the link is used; the page is only looked at.
      await page.goto("/forgot-password");
      await page.getByLabel("E-mail").fill(DEMO.tech);
      await page.getByRole("button", { name: "Send reset link" }).click();
      const mail = await waitForEmail(page, DEMO.tech, /Reset your Railwise password/);
      await page.goto(/https?:\/\/\S+(\/reset-password\/[a-z0-9]+)/.exec(mail.text)![1]);
      await expect(page.getByLabel("New password")).toBeVisible();
    },
  },
  { name: "reset password (an unknown link)", role: null, open: go("/reset-password/no-such-token") },
  {
    name: "invitation",
    role: "owner",
    open: async (page) => {
      await page.goto("/settings");
      const email = uniqueEmail("axe-invitee");
      await page.getByLabel("E-mail").fill(email);
      await page.getByLabel("Role", { exact: true }).selectOption("desk");
      await page.getByRole("button", { name: "Send invitation" }).click();
      await expect(page.getByRole("status")).toContainText(`Invitation sent to ${email}`);
      const mail = await waitForEmail(page, email, /invited you/);
      await page.context().clearCookies();
      await page.goto(/https?:\/\/\S+(\/invite\/[a-z0-9]+)/.exec(mail.text)![1]);
      await expect(page.getByRole("button", { name: "Accept invitation" })).toBeVisible();
    },
  },
  { name: "not found", role: null, open: go("/no/such/page") },
  { name: "not found (signed in)", role: "tech", open: go("/boards/no-such-board") },
  { name: "settings", role: "owner", open: go("/settings") },
  { name: "meters", role: "lead", open: go("/settings/meters") },
  { name: "tokens", role: "tech", open: go("/settings/tokens") },
];

test.describe("axe: no serious or critical WCAG 2 A/AA violations", () => {
  for (const visit of VISITS) {
    test(`${visit.name}${visit.role ? ` (${visit.role})` : ""}`, async ({ page }) => {
      if (visit.role) await signIn(page, DEMO[visit.role]);
      await visit.open(page);
      if (visit.role && visit.name !== "invitation") expect(page.url()).not.toMatch(/\/login/);
      expect(await axe(page)).toEqual([]);
      // Both themes must hold up: the dark theme is checked on the same page.
      await page.emulateMedia({ colorScheme: "dark" });
      expect(await axe(page), "dark theme").toEqual([]);
    });
  }
});

// ---- keyboard only --------------------------------------------------------------------------------------

const NAME_TO_ID = new Map(
  OM_5150_MAP.nodes.filter((n) => n.kind === "rail" || n.kind === "signal").map((n) => [n.name, n.id]),
);
const MODE_BY_LABEL = {
  "Voltage, board powered": "voltage",
  "Resistance to ground, power removed": "resistance",
  "Diode drop to ground, power removed": "diode",
} as const;

/** Presses Tab until the focused element is the one `target` finds (at most `max` presses). */
async function tabTo(page: Page, target: ReturnType<Page["locator"]>, max = 120) {
  for (let i = 0; i < max; i++) {
    if (await target.evaluate((el) => el === document.activeElement).catch(() => false)) return;
    await page.keyboard.press("Tab");
  }
  throw new Error(`Tab never reached ${target}`);
}

/** Presses Tab until the focused element is a radio button (Tab enters a radio group at its checked option). */
async function tabToRadio(page: Page, max = 120) {
  for (let i = 0; i < max; i++) {
    if (await page.evaluate(() => (document.activeElement as HTMLInputElement | null)?.type === "radio"))
      return;
    await page.keyboard.press("Tab");
  }
  throw new Error("Tab never reached a radio button");
}

test("a run walked with the keyboard alone reaches a finding", async ({ page }) => {
  test.setTimeout(120_000);
  await page.goto("/login");
  await tabTo(page, page.getByLabel("E-mail"));
  await page.keyboard.type(DEMO.tech);
  await tabTo(page, page.getByLabel("Password"));
  await page.keyboard.type("bench-demo-2026");
  await page.keyboard.press("Enter");
  await expect(page).toHaveURL(/\/boards/);

  await page.goto(`/runs/new?boardId=${BOARD}`);
  const charger = page.getByRole("radio", { name: "Charger and battery" });
  await tabToRadio(page);
  // Arrow keys move within a radio group; Space picks the focused option.
  for (let i = 0; i < 5 && !(await charger.isChecked()); i++) {
    if (await charger.evaluate((el) => el === document.activeElement)) await page.keyboard.press("Space");
    else await page.keyboard.press("ArrowDown");
  }
  await expect(charger).toBeChecked();
  await tabTo(page, page.getByRole("button", { name: "Start the run" }));
  await page.keyboard.press("Enter");
  await expect(page).toHaveURL(/\/runs\/[a-z0-9]+$/);

  // Injected fault: R362, the series resistor on the 3.3 V standby enable, is open (as in walker.spec.ts).
  const sim = simulateBoard(OM_5150_MAP, ["src-charger", "src-battery", "src-button"], { part: "r-en3" });
  const title = page.locator("#check-title");
  const finding = page.locator("#finding-title");
  for (let i = 0; i < 40; i++) {
    await expect(title.or(finding)).toBeVisible();
    if (await finding.isVisible()) break;
    const net = (await title.textContent())!.trim();
    const modeLabel = (await page
      .getByText(
        /^(Voltage, board powered|Resistance to ground, power removed|Diode drop to ground, power removed)$/,
      )
      .textContent())!.trim();
    const mode = MODE_BY_LABEL[modeLabel as keyof typeof MODE_BY_LABEL];
    const gate = page.getByRole("button", { name: /Power and battery are removed|The board is powered/ });
    if (await gate.isVisible()) {
      await tabTo(page, gate);
      await page.keyboard.press("Enter");
    }
    const heading = page.getByRole("heading", { name: /^Readings \(\d+\)$/ });
    const before = Number(/\((\d+)\)/.exec((await heading.textContent()) ?? "")?.[1]);
    const input = page.getByLabel(/^Reading \(/);
    // The walker puts the caret in the reading field itself, so a keyboard user can type straight away.
    await expect(input).toBeFocused();
    await page.keyboard.type(sim.readingText(NAME_TO_ID.get(net)!, mode));
    await page.keyboard.press("Enter");
    await expect(page.getByRole("heading", { name: `Readings (${before + 1})` })).toBeVisible();
  }
  await expect(page.getByRole("heading", { name: "Fault isolated" })).toBeVisible();
  await expect(page.getByTestId("finding-message")).toContainText("R362");
});
