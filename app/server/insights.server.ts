import { and, asc, eq, inArray, isNull, type SQL, sql } from "drizzle-orm";
import { type FailureRate, failureRate } from "~/lib/engine";
import { monthsBetween, nextMonth, SMOOTHING_ALPHA, smoothedForecast, stockToHold } from "~/lib/forecast";
import { type InsightsFilter, REPEAT_WINDOW_DAYS } from "~/lib/insights-filters";

export { REPEAT_WINDOW_DAYS };
import type { Db } from "./db.server";
import { boards, maps, mapVersions, members, users } from "./schema.server";

// Note: runs.started_at and readings.taken_at are stored in columns named created_at (schema helper).
// Shop insights, all aggregated in SQL (bench/insights.ts times these queries at 100,000 runs). JavaScript
// only computes the Wilson interval per result row and the parts forecast per part, on already-grouped rows.

const DAY_MS = 86_400_000;

/** Conditions on `runs r` shared by every query: always the shop, then the filters. */
function runConditions(shopId: string, f: InsightsFilter, opts: { endedOnly?: boolean } = {}): SQL {
  const parts: SQL[] = [
    sql`r.shop_id = ${shopId}`,
    sql`r.created_at >= ${f.fromMs}`,
    sql`r.created_at < ${f.toMs}`,
  ];
  if (f.boardId) parts.push(sql`r.board_id = ${f.boardId}`);
  if (f.versionId) parts.push(sql`r.map_version_id = ${f.versionId}`);
  if (f.techId) parts.push(sql`r.tech_id = ${f.techId}`);
  if (f.outcome) parts.push(sql`r.outcome = ${f.outcome}`);
  if (opts.endedOnly) parts.push(sql`r.status <> 'open'`);
  return sql.join(parts, sql` AND `);
}

function wilson(k: number, n: number): FailureRate {
  const r = failureRate(k, n);
  return r.ok ? r.value : { rate: 0, low: 0, high: 1 };
}

// ---------------------------------------------------------------------------------------------- hot spots

export type HotSpot = {
  boardId: string;
  boardLabel: string;
  nodeId: string;
  nodeName: string;
  nodeKind: "rail" | "signal" | "part";
  refdes: string | null;
  /** What a finding on this node means: the part failed, or the net was shorted. */
  findingKind: "part" | "short";
  failures: number;
  runs: number;
} & FailureRate;

/**
 * Per board and node: runs that ended with the node as their finding ÷ ended runs on map versions that contain
 * the node (map_version_nodes), with the 95 % Wilson interval, ranked by its lower bound.
 */
export async function getHotSpots(db: Db, shopId: string, f: InsightsFilter): Promise<HotSpot[]> {
  const w = runConditions(shopId, f, { endedOnly: true });
  const rows = await db.all<{
    board_id: string;
    node_id: string;
    node_name: string;
    kind: HotSpot["nodeKind"];
    refdes: string | null;
    runs: number;
    failures: number;
    board_label: string;
  }>(sql`
    WITH rv AS (
      SELECT r.board_id, r.map_version_id, COUNT(*) AS runs
      FROM runs r WHERE ${w}
      GROUP BY r.board_id, r.map_version_id
    ),
    denom AS (
      SELECT rv.board_id, n.node_id, MAX(n.node_name) AS node_name, MAX(n.kind) AS kind,
             MAX(n.refdes) AS refdes, SUM(rv.runs) AS runs
      FROM rv JOIN map_version_nodes n ON n.map_version_id = rv.map_version_id
      WHERE n.kind <> 'source'
      GROUP BY rv.board_id, n.node_id
    ),
    fails AS (
      SELECT r.board_id, f.node_id, COUNT(DISTINCT f.run_id) AS failures
      FROM runs r JOIN findings f ON f.run_id = r.id
      WHERE ${w} AND f.node_id IS NOT NULL AND f.kind IN ('part', 'short')
      -- "+" keeps the planner on the covering date index instead of the board index (it would pick that one
      -- for the grouping order and then read every run row from the table).
      GROUP BY +r.board_id, f.node_id
    )
    SELECT d.board_id, d.node_id, d.node_name, d.kind, d.refdes, d.runs,
           COALESCE(fl.failures, 0) AS failures,
           b.board_number || CASE WHEN b.revision <> '' THEN ' rev ' || b.revision ELSE '' END AS board_label
    FROM denom d
    LEFT JOIN fails fl ON fl.board_id = d.board_id AND fl.node_id = d.node_id
    JOIN boards b ON b.id = d.board_id AND b.shop_id = ${shopId}
  `);
  const out: HotSpot[] = rows.map((row) => {
    // A finding on a version that was never indexed would push k above n; count that run as seen.
    const runs = Math.max(Number(row.runs), Number(row.failures));
    const failures = Number(row.failures);
    return {
      boardId: row.board_id,
      boardLabel: row.board_label,
      nodeId: row.node_id,
      nodeName: row.node_name,
      nodeKind: row.kind,
      refdes: row.refdes,
      findingKind: row.kind === "part" ? "part" : "short",
      failures,
      runs,
      ...wilson(failures, runs),
    };
  });
  return out.sort(
    (a, b) =>
      b.low - a.low ||
      b.rate - a.rate ||
      a.boardLabel.localeCompare(b.boardLabel) ||
      a.nodeId.localeCompare(b.nodeId),
  );
}

// ---------------------------------------------------------------------------------------------------- runs

export type StrategyStats = {
  strategy: string;
  runs: number;
  isolated: number;
  medianMs: number | null;
  p90Ms: number | null;
  medianReadings: number | null;
  meanReadings: number | null;
};

/**
 * Time to isolation (nearest-rank median and 90th percentile) and readings per isolated run, per strategy and
 * for all strategies together ("all"). Readings count what was probed: skipped readings and corrections
 * (a reading that replaces an earlier one) are left out.
 */
export async function getStrategyStats(db: Db, shopId: string, f: InsightsFilter): Promise<StrategyStats[]> {
  const w = runConditions(shopId, f);
  const rows = await db.all<{
    strategy: string;
    runs: number;
    isolated: number;
    median_ms: number | null;
    p90_ms: number | null;
    median_readings: number | null;
    mean_readings: number | null;
  }>(sql`
    WITH base AS (
      SELECT r.id, r.strategy, r.isolated_at - r.created_at AS ms
      FROM runs r WHERE ${w}
    ),
    iso AS MATERIALIZED (
      SELECT b.strategy, b.ms,
             (SELECT COUNT(*) FROM readings x
               WHERE x.run_id = b.id AND x.skipped = 0 AND x.replaces_id IS NULL) AS readings
      FROM base b WHERE b.ms IS NOT NULL
    ),
    both_ AS (SELECT strategy, ms, readings FROM iso UNION ALL SELECT 'all', ms, readings FROM iso),
    ranked AS (
      SELECT strategy, ms, readings,
             ROW_NUMBER() OVER (PARTITION BY strategy ORDER BY ms) AS rn_ms,
             ROW_NUMBER() OVER (PARTITION BY strategy ORDER BY readings) AS rn_rd,
             COUNT(*) OVER (PARTITION BY strategy) AS cnt
      FROM both_
    ),
    stats AS (
      SELECT strategy, MAX(cnt) AS isolated,
             MIN(CASE WHEN rn_ms = (cnt * 50 + 99) / 100 THEN ms END) AS median_ms,
             MIN(CASE WHEN rn_ms = (cnt * 90 + 99) / 100 THEN ms END) AS p90_ms,
             MIN(CASE WHEN rn_rd = (cnt * 50 + 99) / 100 THEN readings END) AS median_readings,
             AVG(readings) AS mean_readings
      FROM ranked GROUP BY strategy
    ),
    totals AS (
      SELECT strategy, COUNT(*) AS runs FROM base GROUP BY strategy
      UNION ALL SELECT 'all', COUNT(*) FROM base
    )
    SELECT t.strategy, t.runs, COALESCE(s.isolated, 0) AS isolated, s.median_ms, s.p90_ms,
           s.median_readings, s.mean_readings
    FROM totals t LEFT JOIN stats s ON s.strategy = t.strategy
    ORDER BY CASE t.strategy WHEN 'order' THEN 1 WHEN 'split' THEN 2 WHEN 'best' THEN 3 ELSE 4 END
  `);
  return rows.map((r) => ({
    strategy: r.strategy,
    runs: Number(r.runs),
    isolated: Number(r.isolated),
    medianMs: r.median_ms == null ? null : Number(r.median_ms),
    p90Ms: r.p90_ms == null ? null : Number(r.p90_ms),
    medianReadings: r.median_readings == null ? null : Number(r.median_readings),
    meanReadings: r.mean_readings == null ? null : Math.round(Number(r.mean_readings) * 100) / 100,
  }));
}

export type EscalationSpot = {
  boardLabel: string;
  netId: string | null;
  netName: string;
  escalations: number;
};

export type EscalationStats = { runs: number; escalated: number; spots: EscalationSpot[] } & FailureRate;

/**
 * Escalation rate over all runs in the filter, and where escalations happen: the net of the last reading
 * taken before the run was escalated ("before the first reading" when there was none).
 */
export async function getEscalations(db: Db, shopId: string, f: InsightsFilter): Promise<EscalationStats> {
  const w = runConditions(shopId, f);
  const [totals] = await db.all<{ runs: number; escalated: number }>(sql`
    SELECT COUNT(*) AS runs, COALESCE(SUM(r.escalated_at IS NOT NULL), 0) AS escalated FROM runs r WHERE ${w}
  `);
  const spots = await db.all<{
    board_label: string;
    net_id: string | null;
    net_name: string | null;
    n: number;
  }>(sql`
    WITH e AS (
      SELECT r.board_id, r.map_version_id,
             (SELECT x.net_id FROM readings x
               WHERE x.run_id = r.id AND x.created_at <= r.escalated_at
               ORDER BY x.seq DESC LIMIT 1) AS net_id
      FROM runs r WHERE ${w} AND r.escalated_at IS NOT NULL
    )
    SELECT b.board_number || CASE WHEN b.revision <> '' THEN ' rev ' || b.revision ELSE '' END AS board_label,
           e.net_id, MAX(n.node_name) AS net_name, COUNT(*) AS n
    FROM e
    JOIN boards b ON b.id = e.board_id
    LEFT JOIN map_version_nodes n ON n.map_version_id = e.map_version_id AND n.node_id = e.net_id
    GROUP BY e.board_id, e.net_id
    ORDER BY n DESC, board_label, e.net_id
  `);
  const runs = Number(totals?.runs ?? 0);
  const escalated = Number(totals?.escalated ?? 0);
  return {
    runs,
    escalated,
    ...wilson(escalated, runs),
    spots: spots.map((s) => ({
      boardLabel: s.board_label,
      netId: s.net_id,
      netName: s.net_id ? (s.net_name ?? s.net_id) : "Before the first reading",
      escalations: Number(s.n),
    })),
  };
}

/** Jobs, collapsed from their runs, on devices with a serial number: the base of both repeat statistics. */
function jobSpans(shopId: string, f: InsightsFilter) {
  return sql`
    jr AS (
      SELECT r.job_id, j.serial, j.number AS job_number, MIN(r.created_at) AS started,
             MAX(COALESCE(r.closed_at, r.isolated_at, r.created_at)) AS ended, MAX(r.board_id) AS board_id,
             MAX(r.outcome = 'powers-on') AS fixed
      FROM runs r JOIN jobs j ON j.id = r.job_id AND j.shop_id = ${shopId}
      WHERE ${runConditions(shopId, f)} AND r.job_id IS NOT NULL AND j.serial <> ''
      GROUP BY r.job_id
    ),
    seq AS (
      SELECT jr.*, LEAD(job_number) OVER win AS next_job_number, LEAD(started) OVER win AS next_started,
             LEAD(job_id) OVER win AS next_job_id
      FROM jr WINDOW win AS (PARTITION BY serial ORDER BY started, job_id)
    ),
    repeats AS (
      SELECT * FROM seq
      WHERE fixed = 1 AND next_job_id IS NOT NULL AND next_started - ended <= ${REPEAT_WINDOW_DAYS * DAY_MS}
    )`;
}

export type RepeatFailure = {
  serial: string;
  boardLabel: string;
  firstJob: number;
  nextJob: number;
  daysApart: number;
};

export type RepeatStats = { fixedJobs: number; repeats: number; list: RepeatFailure[] } & FailureRate;

/**
 * A repeat failure: a job whose run ended "powers on", followed by another job on the same serial number that
 * started within 30 days of the first job's last run. Rate = repeats ÷ fixed jobs with a serial number.
 */
export async function getRepeatFailures(db: Db, shopId: string, f: InsightsFilter): Promise<RepeatStats> {
  const [totals] = await db.all<{ fixed_jobs: number; repeats: number }>(sql`
    WITH ${jobSpans(shopId, f)}
    SELECT (SELECT COUNT(*) FROM jr WHERE fixed = 1) AS fixed_jobs, (SELECT COUNT(*) FROM repeats) AS repeats
  `);
  const list = await db.all<{
    serial: string;
    board_label: string;
    job_number: number;
    next_job_number: number;
    gap: number;
  }>(sql`
    WITH ${jobSpans(shopId, f)}
    SELECT rp.serial, rp.job_number, rp.next_job_number, rp.next_started - rp.ended AS gap,
           b.board_number || CASE WHEN b.revision <> '' THEN ' rev ' || b.revision ELSE '' END AS board_label
    FROM repeats rp JOIN boards b ON b.id = rp.board_id
    ORDER BY rp.started DESC LIMIT 500
  `);
  const fixedJobs = Number(totals?.fixed_jobs ?? 0);
  const repeats = Number(totals?.repeats ?? 0);
  return {
    fixedJobs,
    repeats,
    ...wilson(repeats, fixedJobs),
    list: list.map((r) => ({
      serial: r.serial,
      boardLabel: r.board_label,
      firstJob: Number(r.job_number),
      nextJob: Number(r.next_job_number),
      daysApart: Math.max(0, Math.round((Number(r.gap) / DAY_MS) * 10) / 10),
    })),
  };
}

export type FixKindStats = { fixKind: string; fixes: number; firstTime: number } & FailureRate;

/**
 * First-time-fix rate per fix type: findings with a fix and a re-test outcome; a first-time fix powers on and
 * its device does not come back within 30 days (no repeat failure on its serial number).
 */
export async function getFirstTimeFix(db: Db, shopId: string, f: InsightsFilter): Promise<FixKindStats[]> {
  const rows = await db.all<{ fix_kind: string; fixes: number; first_time: number }>(sql`
    WITH ${jobSpans(shopId, f)}
    SELECT fd.fix_kind, COUNT(*) AS fixes,
           SUM(fd.outcome = 'powers-on' AND (r.job_id IS NULL OR r.job_id NOT IN (SELECT job_id FROM repeats)))
             AS first_time
    FROM runs r JOIN findings fd ON fd.run_id = r.id
    WHERE ${runConditions(shopId, f)} AND fd.fix_kind IS NOT NULL AND fd.outcome IS NOT NULL
    GROUP BY fd.fix_kind
  `);
  return rows
    .map((r) => {
      const fixes = Number(r.fixes);
      const firstTime = Number(r.first_time);
      return { fixKind: r.fix_kind, fixes, firstTime, ...wilson(firstTime, fixes) };
    })
    .sort((a, b) => b.fixes - a.fixes || a.fixKind.localeCompare(b.fixKind));
}

// --------------------------------------------------------------------------------------------------- parts

export type PartsUsage = {
  months: string[];
  /** The month the forecast is for: the one after the last complete month in the window. */
  nextMonth: string;
  /** A month of the window that is still running (shown, not forecast from), if any. */
  runningMonth: string | null;
  method: string;
  parts: Array<{ part: string; perMonth: number[]; total: number; forecast: number; stock: number }>;
};

/**
 * Parts used in fixes (findings.parts_used, one entry per part fitted) per calendar month (UTC), with next
 * month's need forecast by simple exponential smoothing over every month of the window, empty months as 0.
 */
export async function getPartsUsage(
  db: Db,
  shopId: string,
  f: InsightsFilter,
  now = Date.now(),
): Promise<PartsUsage> {
  const rows = await db.all<{ month: string; part: string; qty: number }>(sql`
    SELECT strftime('%Y-%m', fd.created_at / 1000, 'unixepoch') AS month, p.value AS part, COUNT(*) AS qty
    FROM runs r JOIN findings fd ON fd.run_id = r.id, json_each(fd.parts_used) p
    WHERE ${runConditions(shopId, f)} AND fd.parts_used IS NOT NULL AND json_valid(fd.parts_used)
      AND p.type = 'text'
    GROUP BY month, part
  `);
  const lastDay = new Date(f.toMs - DAY_MS).toISOString().slice(0, 10);
  const months = monthsBetween(f.from, lastDay);
  const index = new Map(months.map((m, i) => [m, i]));
  const byPart = new Map<string, number[]>();
  for (const r of rows) {
    const i = index.get(r.month);
    if (i === undefined) continue;
    let series = byPart.get(r.part);
    if (!series) {
      series = new Array(months.length).fill(0);
      byPart.set(r.part, series);
    }
    series[i] += Number(r.qty);
  }
  // The month still running is shown but not forecast from: a half month would drag the forecast down.
  const running = new Date(now).toISOString().slice(0, 7);
  const complete = months.filter((m) => m < running).length;
  const parts = [...byPart.entries()].map(([part, perMonth]) => {
    const forecast = Math.round(smoothedForecast(perMonth.slice(0, complete)) * 100) / 100;
    return {
      part,
      perMonth,
      total: perMonth.reduce((s, x) => s + x, 0),
      forecast,
      stock: stockToHold(forecast),
    };
  });
  parts.sort((a, b) => b.forecast - a.forecast || b.total - a.total || a.part.localeCompare(b.part));
  return {
    months,
    nextMonth: complete ? nextMonth(months[complete - 1]) : running,
    runningMonth: complete < months.length ? months[complete] : null,
    method: `Simple exponential smoothing, α = ${SMOOTHING_ALPHA}, over every complete month shown (months without use count as 0; the month still running is left out).`,
    parts,
  };
}

// ------------------------------------------------------------------------------------------ filter choices

/** Boards, their published versions and the shop's technicians, for the filter form. */
export async function getFilterChoices(db: Db, shopId: string) {
  const [boardRows, versionRows, people] = await Promise.all([
    db
      .select({
        id: boards.id,
        boardNumber: boards.boardNumber,
        revision: boards.revision,
        model: boards.model,
      })
      .from(boards)
      .where(and(eq(boards.shopId, shopId), isNull(boards.archivedAt)))
      .orderBy(asc(boards.boardNumber), asc(boards.revision)),
    db
      .select({ id: mapVersions.id, number: mapVersions.number, boardId: maps.boardId, mapName: maps.name })
      .from(mapVersions)
      .innerJoin(maps, eq(maps.id, mapVersions.mapId))
      .where(eq(mapVersions.shopId, shopId))
      .orderBy(asc(maps.name), asc(mapVersions.number)),
    db
      .select({ id: users.id, name: users.name })
      .from(members)
      .innerJoin(users, eq(users.id, members.userId))
      .where(and(eq(members.shopId, shopId), inArray(members.role, ["owner", "lead", "tech"])))
      .orderBy(asc(users.name)),
  ]);
  return {
    boards: boardRows.map((b) => ({
      id: b.id,
      label: `${b.boardNumber}${b.revision ? ` rev ${b.revision}` : ""} · ${b.model}`,
    })),
    versions: versionRows,
    techs: people,
  };
}
