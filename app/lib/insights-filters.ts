import { z } from "zod";

// Filters shared by every insights page, CSV export and the JSON API: one GET query-string format.

export const OUTCOMES = ["powers-on", "still-dead", "new-symptom"] as const;
export type Outcome = (typeof OUTCOMES)[number];
export const OUTCOME_LABELS: Record<Outcome, string> = {
  "powers-on": "Powers on",
  "still-dead": "Still dead",
  "new-symptom": "New symptom",
};

const DAY_MS = 86_400_000;
/** A device back on the same serial number within this many days of a fix is a repeat failure. */
export const REPEAT_WINDOW_DAYS = 30;
/** Without a `from` date the pages look back this far (a year keeps seasonal parts in view). */
export const DEFAULT_LOOKBACK_DAYS = 365;

const isoDate = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}$/, "Use a date like 2026-03-31.")
  .refine((s) => !Number.isNaN(Date.parse(`${s}T00:00:00Z`)), "That is not a calendar date.");
const id = z.string().regex(/^[A-Za-z0-9_.-]{1,80}$/, "Unknown value.");

export const InsightsFilterSchema = z
  .object({
    from: isoDate.optional(),
    to: isoDate.optional(),
    board: id.optional(),
    version: id.optional(),
    tech: id.optional(),
    outcome: z.enum(OUTCOMES, { error: "Pick one of the listed outcomes." }).optional(),
  })
  .refine((f) => !f.from || !f.to || f.from <= f.to, {
    message: "The start date is after the end date.",
    path: ["to"],
  });

export type InsightsFilterInput = z.infer<typeof InsightsFilterSchema>;

/** Resolved filters: a half-open time window [fromMs, toMs) in UTC plus optional ids. */
export type InsightsFilter = {
  fromMs: number;
  toMs: number;
  from: string;
  to: string;
  boardId?: string;
  versionId?: string;
  techId?: string;
  outcome?: Outcome;
};

const day = (ms: number) => new Date(ms).toISOString().slice(0, 10);

/**
 * Reads filters from a query string. A bad value is reported and left out (the page still shows the other
 * filters' results), so a typo never silently widens into a different question without saying so.
 */
export function parseInsightsFilter(
  params: URLSearchParams,
  now = Date.now(),
): { filter: InsightsFilter; errors: Record<string, string> } {
  const raw: Record<string, string> = {};
  for (const key of ["from", "to", "board", "version", "tech", "outcome"]) {
    const v = params.get(key)?.trim();
    if (v) raw[key] = v;
  }
  const errors: Record<string, string> = {};
  let value: InsightsFilterInput = {};
  const parsed = InsightsFilterSchema.safeParse(raw);
  if (parsed.success) value = parsed.data;
  else {
    for (const issue of parsed.error.issues) errors[String(issue.path[0] ?? "form")] ??= issue.message;
    const keep: Record<string, string> = {};
    for (const [k, v] of Object.entries(raw)) if (!errors[k]) keep[k] = v;
    const retry = InsightsFilterSchema.safeParse(keep);
    value = retry.success ? retry.data : {};
  }
  const to = value.to ?? day(now);
  const toMs = Date.parse(`${to}T00:00:00Z`) + DAY_MS;
  const from = value.from ?? day(toMs - DAY_MS * DEFAULT_LOOKBACK_DAYS);
  return {
    filter: {
      from,
      to,
      fromMs: Date.parse(`${from}T00:00:00Z`),
      toMs,
      boardId: value.board,
      versionId: value.version,
      techId: value.tech,
      outcome: value.outcome,
    },
    errors,
  };
}

/** The query string of a filter (for links between pages and to the CSV export). */
export function filterQuery(f: InsightsFilter): string {
  const p = new URLSearchParams({ from: f.from, to: f.to });
  if (f.boardId) p.set("board", f.boardId);
  if (f.versionId) p.set("version", f.versionId);
  if (f.techId) p.set("tech", f.techId);
  if (f.outcome) p.set("outcome", f.outcome);
  return p.toString();
}

/**
 * A chosen map version must be one of the shop's and, with a board chosen, that board's: otherwise it is reported
 * beside its field and left out, as other bad filter values are.
 */
export function checkVersionFilter(
  parsed: { filter: InsightsFilter; errors: Record<string, string> },
  versions: ReadonlyArray<{ id: string; boardId: string }>,
): { filter: InsightsFilter; errors: Record<string, string> } {
  const { filter, errors } = parsed;
  if (!filter.versionId) return parsed;
  const version = versions.find((v) => v.id === filter.versionId);
  const problem = !version
    ? "That map version is not in this shop."
    : filter.boardId && version.boardId !== filter.boardId
      ? "That map version belongs to another board: pick one of this board's versions, or all versions."
      : null;
  if (!problem) return parsed;
  return { filter: { ...filter, versionId: undefined }, errors: { ...errors, version: problem } };
}
