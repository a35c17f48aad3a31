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

type CondOpts = {
  endedOnly?: boolean;
  /**
   * Keeps the planner off the date and filter columns ("+col" is not indexable) so it walks the index that
   * matches the query's GROUP BY / ORDER BY instead of range-scanning by date and sorting afterwards. Those
   * indexes carry the filter columns, so the filters are still checked on index entries only.
   */
  inOrder?: boolean;
  /** The shop too: the rows come through another table's key (a job's runs), not a shop index. */
  throughKey?: boolean;
  /** With inOrder: the board stays indexable (the index starts with shop and board). */
  byBoard?: boolean;
};

/** Conditions on `runs r` shared by every query: always the shop, then the filters. */
function runConditions(shopId: string, f: InsightsFilter, opts: CondOpts = {}): SQL {
  const c = (col: string) => sql.raw(`${opts.inOrder ? "+" : ""}r.${col}`);
  const parts: SQL[] = [
    opts.throughKey ? sql`+r.shop_id = ${shopId}` : sql`r.shop_id = ${shopId}`,
    sql`${c("created_at")} >= ${f.fromMs}`,
    sql`${c("created_at")} < ${f.toMs}`,
  ];
  if (f.boardId)
    parts.push(opts.byBoard ? sql`r.board_id = ${f.boardId}` : sql`${c("board_id")} = ${f.boardId}`);
  if (f.versionId) parts.push(sql`${c("map_version_id")} = ${f.versionId}`);
  if (f.techId) parts.push(sql`${c("tech_id")} = ${f.techId}`);
  if (f.outcome) parts.push(sql`${c("outcome")} = ${f.outcome}`);
  if (opts.endedOnly) parts.push(sql`${c("status")} <> 'open'`);
  return sql.join(parts, sql` AND `);
}

/**
 * The same conditions on `findings fd`, through the run's columns copied onto each finding (run_*, kept by
 * the rollup triggers in schema.server.ts in the same transaction as the finding and every change to its run).
 */
function findingConditions(shopId: string, f: InsightsFilter, opts: CondOpts = {}): SQL {
  const c = (col: string) => sql.raw(`${opts.inOrder ? "+" : ""}fd.${col}`);
  const parts: SQL[] = [
    sql`fd.shop_id = ${shopId}`,
    sql`${c("run_started_at")} >= ${f.fromMs}`,
    sql`${c("run_started_at")} < ${f.toMs}`,
  ];
  if (f.boardId)
    parts.push(opts.byBoard ? sql`fd.run_board_id = ${f.boardId}` : sql`${c("run_board_id")} = ${f.boardId}`);
  if (f.versionId) parts.push(sql`${c("run_version_id")} = ${f.versionId}`);
  if (f.techId) parts.push(sql`${c("run_tech_id")} = ${f.techId}`);
  if (f.outcome) parts.push(sql`${c("run_outcome")} = ${f.outcome}`);
  if (opts.endedOnly) parts.push(sql`${c("run_status")} <> 'open'`);
  return sql.join(parts, sql` AND `);
}

// The runs page asks for several statistics in one Promise.all with the same filter, and some need the same
// rows (repeat jobs for repeats and first-time fix; the per-strategy run counts for strategies and the
// escalation rate). Concurrent identical requests share one query, dropped once it settles, so nothing is
// ever served from an earlier moment.
const inFlight = new WeakMap<Db, Map<string, Promise<unknown>>>();

function shared<T>(
  db: Db,
  what: string,
  shopId: string,
  f: InsightsFilter,
  run: () => Promise<T>,
): Promise<T> {
  const key = JSON.stringify([what, shopId, f.fromMs, f.toMs, f.boardId, f.versionId, f.techId, f.outcome]);
  let byKey = inFlight.get(db);
  if (!byKey) {
    byKey = new Map();
    inFlight.set(db, byKey);
  }
  const hit = byKey.get(key);
  if (hit) return hit as Promise<T>;
  // (Drizzle's query is a lazy thenable that runs again on every then(): start it once, share the promise.)
  const p = (async () => run())();
  const map = byKey;
  map.set(key, p);
  p.finally(() => map.delete(key)).catch(() => {});
  return p;
}

/**
 * The window as UTC day numbers, when the view can be summed from the daily rollups (rollup_day_*, kept by
 * triggers in schema.server.ts): no board, version, technician or outcome filter, and whole days, which the
 * filter form always gives. INSIGHTS_ROLLUPS=off reads the rows instead (the tests compare the two).
 */
function rollupDays(f: InsightsFilter): Days | null {
  if (f.boardId || f.versionId || f.techId || f.outcome || process.env.INSIGHTS_ROLLUPS === "off")
    return null;
  if (f.fromMs % DAY_MS !== 0 || f.toMs % DAY_MS !== 0) return null;
  return { from: f.fromMs / DAY_MS, to: f.toMs / DAY_MS };
}

type Days = { from: number; to: number };

/**
 * A rollup's rows of the shop in the window (`d`). Where the day ends the key (the tables summed in key order)
 * "+" keeps it a check on the rows read in that order; where it follows the shop, a range of the key.
 */
function rollupRowsIn(shopId: string, days: Days, dayLast: boolean): SQL {
  const day = sql.raw(dayLast ? "+d.day" : "d.day");
  return sql`d.shop_id = ${shopId} AND ${day} >= ${days.from} AND ${day} < ${days.to}`;
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
  // Ended runs per version and failures per node: summed from the daily rollups for an unfiltered view.
  const days = rollupDays(f);
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
    WITH rv AS (${
      days
        ? sql`SELECT d.board_id, d.map_version_id, SUM(d.ended) AS runs
      FROM rollup_day_version_runs d
      WHERE ${rollupRowsIn(shopId, days, true)}
      GROUP BY d.board_id, d.map_version_id HAVING SUM(d.ended) > 0`
        : sql`SELECT r.board_id, r.map_version_id, COUNT(*) AS runs
      FROM runs r WHERE ${runConditions(shopId, f, { endedOnly: true, inOrder: true, byBoard: true })}
      GROUP BY r.board_id, r.map_version_id`
    }),
    denom AS (
      SELECT rv.board_id, n.node_id, MAX(n.node_name) AS node_name, MAX(n.kind) AS kind,
             MAX(n.refdes) AS refdes, SUM(rv.runs) AS runs
      FROM rv JOIN map_version_nodes n ON n.map_version_id = rv.map_version_id
      WHERE n.kind <> 'source'
      GROUP BY rv.board_id, n.node_id
    ),
    fails AS (${
      days
        ? sql`SELECT d.board_id, d.node_id, SUM(d.n) AS failures
      FROM rollup_day_node_fails d
      WHERE ${rollupRowsIn(shopId, days, true)}
      GROUP BY d.board_id, d.node_id HAVING SUM(d.n) > 0`
        : sql`
      -- findings_hot: in (board, node) order, so no join per run and no sort.
      -- Runs, not findings: node_first (kept by trigger) marks a run's first finding on the node.
      SELECT fd.run_board_id AS board_id, fd.node_id, COUNT(*) AS failures
      FROM findings fd
      WHERE ${findingConditions(shopId, f, { endedOnly: true, inOrder: true, byBoard: true })}
        AND fd.node_id IS NOT NULL AND fd.kind IN ('part', 'short') AND fd.node_first = 1
      GROUP BY fd.run_board_id, fd.node_id`
    })
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
type StrategyRow = {
  strategy: string;
  runs: number;
  isolated: number;
  escalated: number;
  median_readings: number | null;
  mean_readings: number | null;
};

/**
 * Per strategy and reading count (runs.reading_count, a rollup kept by trigger with every reading), one walk
 * of runs_strategy_readings in index order: runs, isolated and escalated runs, and the readings median and
 * mean from that small histogram (nearest rank: the first count whose cumulative share reaches the rank).
 */
function strategySummary(db: Db, shopId: string, f: InsightsFilter): Promise<StrategyRow[]> {
  const days = rollupDays(f);
  // The histogram: summed from the daily rollup for an unfiltered view, counted from the runs otherwise.
  const histogram = days
    ? sql`SELECT d.strategy, d.reading_count AS rc, SUM(d.runs) AS runs, SUM(d.isolated) AS isolated,
               SUM(d.escalated) AS escalated
        FROM rollup_day_strategies d
        WHERE ${rollupRowsIn(shopId, days, false)}
        GROUP BY d.strategy, d.reading_count HAVING SUM(d.runs) > 0`
    : sql`SELECT r.strategy, r.reading_count AS rc, COUNT(*) AS runs, COUNT(r.isolated_at) AS isolated,
               COUNT(r.escalated_at) AS escalated
        FROM runs r WHERE ${runConditions(shopId, f, { inOrder: true })}
        GROUP BY r.strategy, r.reading_count`;
  return shared(db, "strategies", shopId, f, () =>
    db.all<StrategyRow>(sql`
      WITH h AS (${histogram}),
      h2 AS (
        SELECT strategy, rc, runs, isolated, escalated FROM h
        UNION ALL SELECT 'all', rc, SUM(runs), SUM(isolated), SUM(escalated) FROM h GROUP BY rc
        UNION ALL SELECT 'all', NULL, 0, 0, 0
      ),
      c AS (
        SELECT strategy, rc, runs, isolated, escalated,
               SUM(isolated) OVER (PARTITION BY strategy ORDER BY rc ROWS UNBOUNDED PRECEDING) AS cum,
               SUM(isolated) OVER (PARTITION BY strategy) AS n
        FROM h2
      )
      SELECT strategy, SUM(runs) AS runs, MAX(n) AS isolated, SUM(escalated) AS escalated,
             MIN(CASE WHEN isolated > 0 AND cum >= (n * 50 + 99) / 100 THEN rc END) AS median_readings,
             SUM(rc * isolated) * 1.0 / NULLIF(MAX(n), 0) AS mean_readings
      FROM c GROUP BY strategy
      ORDER BY CASE strategy WHEN 'order' THEN 1 WHEN 'split' THEN 2 WHEN 'best' THEN 3 ELSE 4 END
    `),
  );
}

export async function getStrategyStats(db: Db, shopId: string, f: InsightsFilter): Promise<StrategyStats[]> {
  // 1. Counts and the readings median and mean: strategySummary.
  const rows = await strategySummary(db, shopId, f);
  // 2. Time to isolation: the nearest-rank median and p90 are single index entries of runs_strategy_ms /
  //    runs_ms (ordered by isolated_at - started_at), reached by OFFSET (the p90 from the top end).
  const rank = (n: number, pct: number) => Math.floor((n * pct + 99) / 100);
  const ms = sql`r.isolated_at - r.created_at`;
  const pick = (strategy: string, n: number, pct: number) => {
    const top = pct > 50;
    const offset = top ? n - rank(n, pct) : rank(n, pct) - 1;
    return sql`(SELECT ${ms} FROM runs r
      WHERE ${runConditions(shopId, f, { inOrder: true })} AND r.isolated_at IS NOT NULL
        ${strategy === "all" ? sql`` : sql`AND r.strategy = ${strategy}`}
      ORDER BY ${ms} ${sql.raw(top ? "DESC" : "ASC")} LIMIT 1 OFFSET ${offset})`;
  };
  const withIso = rows.filter((r) => Number(r.isolated) > 0);
  const picks = withIso.length
    ? ((
        await db.all<Record<string, number | null>>(
          sql`SELECT ${sql.join(
            withIso.flatMap((r, i) => [
              sql`${pick(r.strategy, Number(r.isolated), 50)} AS ${sql.raw(`m${i}`)}`,
              sql`${pick(r.strategy, Number(r.isolated), 90)} AS ${sql.raw(`p${i}`)}`,
            ]),
            sql`, `,
          )}`,
        )
      )[0] ?? {})
    : {};
  return rows.map((r) => {
    const i = withIso.indexOf(r);
    const m = i < 0 ? null : picks[`m${i}`];
    const p = i < 0 ? null : picks[`p${i}`];
    return {
      strategy: r.strategy,
      runs: Number(r.runs),
      isolated: Number(r.isolated),
      medianMs: m == null ? null : Number(m),
      p90Ms: p == null ? null : Number(p),
      medianReadings: r.median_readings == null ? null : Number(r.median_readings),
      meanReadings: r.mean_readings == null ? null : Math.round(Number(r.mean_readings) * 100) / 100,
    };
  });
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
  // Walked in runs_escalated order (board, version, net): the groups come out without a sort.
  const w = runConditions(shopId, f, { inOrder: true, byBoard: true });
  // Runs and escalated runs in the filter: the "all" row of the strategy summary (shared with the strategies
  // table when both are asked for together).
  const totals = (await strategySummary(db, shopId, f)).find((r) => r.strategy === "all");
  const spots = await db.all<{
    board_label: string;
    net_id: string | null;
    net_name: string | null;
    n: number;
  }>(sql`
    WITH e AS (
      -- runs.escalation_net_id: the net of the last reading before escalated_at, kept by trigger (schema.server).
      SELECT r.board_id, r.map_version_id, r.escalation_net_id AS net_id, COUNT(*) AS n
      FROM runs r WHERE ${w} AND r.escalated_at IS NOT NULL
      GROUP BY r.board_id, r.map_version_id, r.escalation_net_id
    )
    SELECT b.board_number || CASE WHEN b.revision <> '' THEN ' rev ' || b.revision ELSE '' END AS board_label,
           e.net_id, MAX(n.node_name) AS net_name, SUM(e.n) AS n
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

/**
 * Jobs, collapsed from their runs, on devices with a serial number: the base of both repeat statistics. Only a
 * serial number with more than one job can hold a repeat, so the spans are built for those jobs alone
 * (jobs.serial_jobs, kept by trigger, and the partial index jobs_serial_repeats), each job's runs through the
 * covering runs_job index.
 */
function jobSpans(shopId: string, f: InsightsFilter) {
  return sql`
    jr AS (
      SELECT r.job_id, j.serial, j.number AS job_number, MIN(r.created_at) AS started,
             MAX(COALESCE(r.closed_at, r.isolated_at, r.created_at)) AS ended, MAX(r.board_id) AS board_id,
             MAX(r.outcome = 'powers-on') AS fixed
      FROM jobs j CROSS JOIN runs r
      WHERE j.shop_id = ${shopId} AND j.serial_jobs > 1 AND j.serial <> '' AND r.job_id = j.id
        AND ${runConditions(shopId, f, { inOrder: true, throughKey: true })}
      GROUP BY j.serial, j.number, j.id -- the order of jobs_serial_repeats: no sort
    ),
    seq AS (
      -- (Each window function is a pass of its own: a next job exists exactly when its start does, started
      -- being a MIN that is never NULL, so two of them are enough.)
      SELECT jr.*, LEAD(job_number) OVER win AS next_job_number, LEAD(started) OVER win AS next_started
      FROM jr WINDOW win AS (PARTITION BY serial ORDER BY started, job_id)
    ),
    repeats AS (
      SELECT * FROM seq
      WHERE fixed = 1 AND next_started IS NOT NULL AND next_started - ended <= ${REPEAT_WINDOW_DAYS * DAY_MS}
    )`;
}

/**
 * Jobs on a device with a serial number that have a run in the filter ending "powers on": the runs of one
 * walk of runs_outcome_job, grouped in job order; jobs without a serial number are left out by the set of
 * those (usually few or none, from jobs_shop_serial).
 */
async function fixedJobsCount(db: Db, shopId: string, f: InsightsFilter): Promise<number> {
  // The set is only built (and probed per run) when the shop has a job without a serial number at all.
  const [anyBlank] = await db.all<{ n: number }>(
    sql`SELECT EXISTS (SELECT 1 FROM jobs nj WHERE nj.shop_id = ${shopId} AND nj.serial = '') AS n`,
  );
  const [row] = await db.all<{ n: number }>(sql`SELECT COUNT(*) AS n FROM (
      SELECT r.job_id FROM runs r
      WHERE ${runConditions(shopId, f, { inOrder: true })} AND r.outcome = 'powers-on' AND r.job_id IS NOT NULL
        ${Number(anyBlank?.n) ? sql`AND r.job_id NOT IN (SELECT nj.id FROM jobs nj WHERE nj.shop_id = ${shopId} AND nj.serial = '')` : sql``}
      GROUP BY r.job_id)`);
  return Number(row?.n ?? 0);
}

export type RepeatFailure = {
  serial: string;
  boardLabel: string;
  firstJob: number;
  nextJob: number;
  daysApart: number;
};

export type RepeatStats = { fixedJobs: number; repeats: number; list: RepeatFailure[] } & FailureRate;

type RepeatRow = {
  job_id: string;
  serial: string;
  board_label: string;
  job_number: number;
  next_job_number: number;
  gap: number;
};

function repeatJobs(db: Db, shopId: string, f: InsightsFilter): Promise<RepeatRow[]> {
  return shared(db, "repeats", shopId, f, () =>
    db.all<RepeatRow>(sql`
      WITH ${jobSpans(shopId, f)}
      SELECT rp.job_id, rp.serial, rp.job_number, rp.next_job_number, rp.next_started - rp.ended AS gap,
             b.board_number || CASE WHEN b.revision <> '' THEN ' rev ' || b.revision ELSE '' END AS board_label
      FROM repeats rp JOIN boards b ON b.id = rp.board_id
      ORDER BY rp.started DESC
    `),
  );
}

/**
 * A repeat failure: a job whose run ended "powers on", followed by another job on the same serial number that
 * started within 30 days of the first job's last run. Rate = repeats ÷ fixed jobs with a serial number.
 */
export async function getRepeatFailures(db: Db, shopId: string, f: InsightsFilter): Promise<RepeatStats> {
  const [all, fixedJobs] = await Promise.all([repeatJobs(db, shopId, f), fixedJobsCount(db, shopId, f)]);
  const list = all.slice(0, 500);
  const repeats = all.length;
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
  // Findings per fix type (the run's filter columns are on the finding), less the fixes that powered on but
  // whose job came back (the few repeat jobs, through their runs).
  const repeatIds = (await repeatJobs(db, shopId, f)).map((r) => r.job_id);
  // Per fix type: summed from the daily rollup for an unfiltered view, counted from findings_fix otherwise.
  const days = rollupDays(f);
  const rows = await db.all<{ fix_kind: string; fixes: number; first_time: number }>(sql`
    WITH came_back AS (
      SELECT fd.fix_kind, COUNT(*) AS n
      FROM json_each(${JSON.stringify(repeatIds)}) rp CROSS JOIN runs r CROSS JOIN findings fd
      WHERE r.job_id = rp.value AND ${runConditions(shopId, f, { inOrder: true, throughKey: true })}
        AND fd.run_id = r.id
        AND fd.fix_kind IS NOT NULL AND fd.outcome = 'powers-on'
      GROUP BY fd.fix_kind
    ),
    per_kind AS (${
      days
        ? sql`SELECT d.fix_kind, SUM(d.fixes) AS fixes, SUM(d.powered_on) AS powers_on
      FROM rollup_day_fix_kinds d
      WHERE ${rollupRowsIn(shopId, days, false)}
      GROUP BY d.fix_kind HAVING SUM(d.fixes) > 0`
        : sql`SELECT fd.fix_kind, COUNT(*) AS fixes, SUM(fd.outcome = 'powers-on') AS powers_on
      FROM findings fd
      WHERE ${findingConditions(shopId, f, { inOrder: true })} AND fd.fix_kind IS NOT NULL AND fd.outcome IS NOT NULL
      GROUP BY fd.fix_kind`
    })
    SELECT k.fix_kind, k.fixes, k.powers_on - COALESCE(cb.n, 0) AS first_time
    FROM per_kind k LEFT JOIN came_back cb ON cb.fix_kind = k.fix_kind
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

export type PartToStock = {
  boardId: string;
  boardLabel: string;
  /** Reference designator as the walker records it (upper case). */
  refdes: string;
  /** From the node of that designator in the map version the run used; null when the map has no such part. */
  name: string | null;
  value: string | null;
  package: string | null;
  perMonth: number[];
  total: number;
  forecast: number;
  stock: number;
};

export type PartsUsage = {
  months: string[];
  /** The month the forecast is for: the one after the last complete month in the window. */
  nextMonth: string;
  /** A month of the window that is still running (shown, not forecast from), if any. */
  runningMonth: string | null;
  method: string;
  parts: PartToStock[];
};

/**
 * Parts used in fixes (findings.parts_used, one reference designator per part fitted) per calendar month
 * (UTC), by board and designator, with the part's value and package from the map version each run used (a
 * designator whose value or package changed between versions is a different part to order, so its own row).
 * Next month's need is forecast by simple exponential smoothing over every month of the window, empty months
 * as 0.
 */
export async function getPartsUsage(
  db: Db,
  shopId: string,
  f: InsightsFilter,
  now = Date.now(),
): Promise<PartsUsage> {
  // findings_parts_by_version walks the findings in (parts list, month, map version) order, so they are counted
  // per group with no sort and no JSON per finding: one parsed list per group, a few thousand groups a year.
  // An unfiltered view sums the daily rollup instead, kept in the same order (schema.server.ts).
  const days = rollupDays(f);
  const groups = await db.all<{ month: string; pu: string; v: string; n: number }>(
    days
      ? sql`
    SELECT d.created_month AS month, d.parts_used AS pu, d.map_version_id AS v, SUM(d.n) AS n
    FROM rollup_day_parts d
    WHERE ${rollupRowsIn(shopId, days, true)}
    GROUP BY d.parts_used, d.created_month, d.map_version_id HAVING SUM(d.n) > 0`
      : sql`
    SELECT fd.created_month AS month, fd.parts_used AS pu, fd.run_version_id AS v, COUNT(*) AS n
    FROM findings fd
    WHERE ${findingConditions(shopId, f, { inOrder: true })} AND fd.parts_used IS NOT NULL
    GROUP BY fd.parts_used, fd.created_month, fd.run_version_id`,
  );
  // Quantity per month, map version and reference designator.
  const qty = new Map<string, { month: string; versionId: string; refdes: string; n: number }>();
  let listText = "";
  let list: unknown = null;
  for (const g of groups) {
    // Groups arrive sorted by list, so each distinct list is parsed once.
    if (g.pu !== listText) {
      listText = g.pu;
      try {
        list = JSON.parse(g.pu);
      } catch {
        list = null;
      }
    }
    if (!Array.isArray(list)) continue;
    const n = Number(g.n);
    for (const item of list) {
      if (typeof item !== "string" || !item.trim()) continue;
      const refdes = item.trim().toUpperCase();
      const key = `${g.month}\u0000${g.v}\u0000${refdes}`;
      const hit = qty.get(key);
      if (hit) hit.n += n;
      else qty.set(key, { month: g.month, versionId: g.v, refdes, n });
    }
  }
  const versionIds = JSON.stringify([...new Set([...qty.values()].map((q) => q.versionId))]);
  // The few versions named above: their board, and each part node's designator, value and package.
  const [versionRows, partRows] = await Promise.all([
    db.all<{ id: string; board_id: string; board_label: string }>(sql`
      SELECT v.id, m.board_id,
             b.board_number || CASE WHEN b.revision <> '' THEN ' rev ' || b.revision ELSE '' END AS board_label
      FROM map_versions v JOIN maps m ON m.id = v.map_id JOIN boards b ON b.id = m.board_id
      WHERE v.shop_id = ${shopId} AND v.id IN (SELECT value FROM json_each(${versionIds}))
    `),
    db.all<{
      version_id: string;
      refdes: string;
      name: string | null;
      value: string | null;
      pkg: string | null;
    }>(sql`
      SELECT v.id AS version_id, upper(trim(json_extract(n.value, '$.refdes'))) AS refdes,
             json_extract(n.value, '$.name') AS name, json_extract(n.value, '$.value') AS value,
             json_extract(n.value, '$.package') AS pkg
      FROM map_versions v, json_each(v.document, '$.nodes') n
      WHERE v.shop_id = ${shopId} AND v.id IN (SELECT value FROM json_each(${versionIds}))
        AND json_valid(v.document) AND json_extract(n.value, '$.kind') = 'part'
        AND json_type(n.value, '$.refdes') = 'text'
    `),
  ]);
  const versionOf = new Map(versionRows.map((v) => [v.id, v]));
  const partOf = new Map<string, { name: string | null; value: string | null; pkg: string | null }>();
  for (const p of partRows) {
    const key = `${p.version_id}\u0000${p.refdes}`;
    if (!partOf.has(key)) partOf.set(key, { name: p.name, value: p.value || null, pkg: p.pkg || null });
  }

  const lastDay = new Date(f.toMs - DAY_MS).toISOString().slice(0, 10);
  const months = monthsBetween(f.from, lastDay);
  const index = new Map(months.map((m, i) => [m, i]));
  const byPart = new Map<string, Omit<PartToStock, "total" | "forecast" | "stock">>();
  for (const r of qty.values()) {
    const i = index.get(r.month);
    if (i === undefined) continue;
    const info = partOf.get(`${r.versionId}\u0000${r.refdes}`);
    const version = versionOf.get(r.versionId);
    const boardId = version?.board_id ?? "";
    const key = JSON.stringify([boardId, r.refdes, info?.value ?? null, info?.pkg ?? null]);
    let part = byPart.get(key);
    if (!part) {
      part = {
        boardId,
        boardLabel: version?.board_label ?? "Unknown board",
        refdes: r.refdes,
        name: info?.name ?? null,
        value: info?.value ?? null,
        package: info?.pkg ?? null,
        perMonth: new Array(months.length).fill(0),
      };
      byPart.set(key, part);
    }
    part.perMonth[i] += r.n;
  }
  // The month still running is shown but not forecast from: a half month would drag the forecast down.
  const running = new Date(now).toISOString().slice(0, 7);
  const complete = months.filter((m) => m < running).length;
  const parts = [...byPart.values()].map((p) => {
    const forecast = Math.round(smoothedForecast(p.perMonth.slice(0, complete)) * 100) / 100;
    return {
      ...p,
      total: p.perMonth.reduce((s, x) => s + x, 0),
      forecast,
      stock: stockToHold(forecast),
    };
  });
  parts.sort(
    (a, b) =>
      b.forecast - a.forecast ||
      b.total - a.total ||
      a.boardLabel.localeCompare(b.boardLabel) ||
      a.refdes.localeCompare(b.refdes, "en", { numeric: true }) ||
      (a.value ?? "").localeCompare(b.value ?? ""),
  );
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
