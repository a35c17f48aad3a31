import { stringify } from "csv-stringify/sync";
import type { InsightsFilter } from "~/lib/insights-filters";
import type { Db } from "./db.server";
import {
  getEscalations,
  getFirstTimeFix,
  getHotSpots,
  getPartsUsage,
  getRepeatFailures,
  getStrategyStats,
} from "./insights.server";

// Every insights table as flat rows, shared by the CSV export and the JSON API so both say the same thing.

export type Cell = string | number | null;
export type FlatTable = {
  columns: Array<{ key: string; header: string }>;
  rows: Array<Record<string, Cell>>;
};

const r4 = (x: number) => Math.round(x * 10_000) / 10_000;
const minutes = (ms: number | null) => (ms == null ? null : Math.round((ms / 60_000) * 10) / 10);

export const INSIGHT_TABLES = {
  "hot-spots": async (db: Db, shopId: string, f: InsightsFilter): Promise<FlatTable> => {
    const rows = await getHotSpots(db, shopId, f);
    return {
      columns: [
        { key: "board", header: "Board" },
        { key: "node_id", header: "Node id" },
        { key: "node", header: "Node" },
        { key: "refdes", header: "Reference" },
        { key: "finding", header: "Finding" },
        { key: "failures", header: "Runs ending here" },
        { key: "runs", header: "Runs on versions with the node" },
        { key: "rate", header: "Rate" },
        { key: "low95", header: "Wilson 95% low" },
        { key: "high95", header: "Wilson 95% high" },
      ],
      rows: rows.map((h) => ({
        board: h.boardLabel,
        node_id: h.nodeId,
        node: h.nodeName,
        refdes: h.refdes,
        finding: h.findingKind === "part" ? "part failed" : "net shorted",
        failures: h.failures,
        runs: h.runs,
        rate: r4(h.rate),
        low95: r4(h.low),
        high95: r4(h.high),
      })),
    };
  },
  strategies: async (db: Db, shopId: string, f: InsightsFilter): Promise<FlatTable> => {
    const rows = await getStrategyStats(db, shopId, f);
    return {
      columns: [
        { key: "strategy", header: "Strategy" },
        { key: "runs", header: "Runs" },
        { key: "isolated", header: "Isolated" },
        { key: "median_min", header: "Median minutes to isolation" },
        { key: "p90_min", header: "90th percentile minutes" },
        { key: "median_readings", header: "Median readings" },
        { key: "mean_readings", header: "Mean readings" },
      ],
      rows: rows.map((s) => ({
        strategy: s.strategy,
        runs: s.runs,
        isolated: s.isolated,
        median_min: minutes(s.medianMs),
        p90_min: minutes(s.p90Ms),
        median_readings: s.medianReadings,
        mean_readings: s.meanReadings,
      })),
    };
  },
  escalations: async (db: Db, shopId: string, f: InsightsFilter): Promise<FlatTable> => {
    const e = await getEscalations(db, shopId, f);
    return {
      columns: [
        { key: "board", header: "Board" },
        { key: "net_id", header: "Net id" },
        { key: "net", header: "Last net read before escalating" },
        { key: "escalations", header: "Escalations" },
      ],
      rows: e.spots.map((s) => ({
        board: s.boardLabel,
        net_id: s.netId,
        net: s.netName,
        escalations: s.escalations,
      })),
    };
  },
  "first-time-fix": async (db: Db, shopId: string, f: InsightsFilter): Promise<FlatTable> => {
    const rows = await getFirstTimeFix(db, shopId, f);
    return {
      columns: [
        { key: "fix_kind", header: "Fix type" },
        { key: "fixes", header: "Fixes" },
        { key: "first_time", header: "First-time fixes" },
        { key: "rate", header: "Rate" },
        { key: "low95", header: "Wilson 95% low" },
        { key: "high95", header: "Wilson 95% high" },
      ],
      rows: rows.map((x) => ({
        fix_kind: x.fixKind,
        fixes: x.fixes,
        first_time: x.firstTime,
        rate: r4(x.rate),
        low95: r4(x.low),
        high95: r4(x.high),
      })),
    };
  },
  repeats: async (db: Db, shopId: string, f: InsightsFilter): Promise<FlatTable> => {
    const r = await getRepeatFailures(db, shopId, f);
    return {
      columns: [
        { key: "serial", header: "Serial number" },
        { key: "board", header: "Board" },
        { key: "first_job", header: "First job" },
        { key: "next_job", header: "Returned as job" },
        { key: "days", header: "Days apart" },
      ],
      rows: r.list.map((x) => ({
        serial: x.serial,
        board: x.boardLabel,
        first_job: x.firstJob,
        next_job: x.nextJob,
        days: x.daysApart,
      })),
    };
  },
  parts: async (db: Db, shopId: string, f: InsightsFilter): Promise<FlatTable> => {
    const p = await getPartsUsage(db, shopId, f);
    return {
      columns: [
        { key: "board", header: "Board" },
        { key: "refdes", header: "Reference" },
        { key: "part", header: "Part" },
        { key: "value", header: "Value" },
        { key: "package", header: "Package" },
        ...p.months.map((m) => ({ key: m, header: m === p.runningMonth ? `${m} (so far)` : m })),
        { key: "total", header: "Total" },
        { key: "forecast", header: `Forecast ${p.nextMonth}` },
        { key: "stock", header: "Stock to hold" },
      ],
      rows: p.parts.map((x) => ({
        board: x.boardLabel,
        refdes: x.refdes,
        part: x.name,
        value: x.value,
        package: x.package,
        ...Object.fromEntries(p.months.map((m, i) => [m, x.perMonth[i]])),
        total: x.total,
        forecast: x.forecast,
        stock: x.stock,
      })),
    };
  },
} as const;

export type InsightTableName = keyof typeof INSIGHT_TABLES;
export const isInsightTable = (s: string | undefined): s is InsightTableName =>
  !!s && Object.hasOwn(INSIGHT_TABLES, s);

/**
 * RFC 4180 CSV through csv-stringify (quotes fields holding commas, quotes or line breaks). Text cells that a
 * spreadsheet would run as a formula (= + - @ tab CR, OWASP "CSV Injection") get a leading apostrophe.
 */
export function toCsv(table: FlatTable): string {
  const safe = (v: Cell) => (typeof v === "string" && /^[=+\-@\t\r]/.test(v) ? `'${v}` : v);
  return stringify(
    table.rows.map((row) => table.columns.map((c) => safe(row[c.key] ?? null))),
    {
      header: true,
      columns: table.columns.map((c) => c.header),
      record_delimiter: "\r\n",
      // csv-stringify quotes only the record delimiter by default; a lone LF must be quoted too (RFC 4180).
      quoted_match: /[\r\n]/,
    },
  );
}
