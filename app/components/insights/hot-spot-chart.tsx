import { AxisBottom } from "@visx/axis";
import { Group } from "@visx/group";
import { scaleBand, scaleLinear } from "@visx/scale";
import { Bar, Line } from "@visx/shape";

export type ChartRow = { key: string; label: string; rate: number; low: number; high: number };

/**
 * Horizontal bars of the failure rate with the Wilson 95 % interval as a whisker. Plain SVG from visx, so the
 * server renders it and it needs no script.
 */
export function HotSpotChart({ rows, title }: { rows: ChartRow[]; title: string }) {
  const width = 640;
  const labelWidth = 230;
  const barHeight = 22;
  const margin = { top: 8, right: 24, bottom: 46, left: labelWidth };
  const innerW = width - margin.left - margin.right;
  const innerH = Math.max(1, rows.length) * barHeight;
  const height = innerH + margin.top + margin.bottom;
  const maxX = Math.min(1, Math.max(0.05, ...rows.map((r) => r.high)));
  const x = scaleLinear<number>({ domain: [0, maxX], range: [0, innerW], nice: true });
  const y = scaleBand<string>({ domain: rows.map((r) => r.key), range: [0, innerH], padding: 0.25 });
  return (
    <figure className="card overflow-x-auto">
      <figcaption className="mb-2 text-sm font-medium">{title}</figcaption>
      <svg width={width} height={height} role="img" aria-label={title} className="max-w-full">
        <Group left={margin.left} top={margin.top}>
          {rows.map((r) => {
            const top = y(r.key) ?? 0;
            const h = y.bandwidth();
            return (
              <g key={r.key}>
                <text x={-8} y={top + h / 2} dy="0.33em" textAnchor="end" fontSize={12} fill="var(--rw-ink)">
                  {r.label.length > 34 ? `${r.label.slice(0, 33)}…` : r.label}
                </text>
                <Bar x={0} y={top} width={Math.max(1, x(r.rate))} height={h} fill="var(--rw-heat-3)" rx={2} />
                <Line
                  from={{ x: x(r.low), y: top + h / 2 }}
                  to={{ x: x(r.high), y: top + h / 2 }}
                  stroke="var(--rw-ink)"
                  strokeWidth={1.5}
                />
                <Line
                  from={{ x: x(r.low), y: top + 3 }}
                  to={{ x: x(r.low), y: top + h - 3 }}
                  stroke="var(--rw-ink)"
                />
                <Line
                  from={{ x: x(r.high), y: top + 3 }}
                  to={{ x: x(r.high), y: top + h - 3 }}
                  stroke="var(--rw-ink)"
                />
                <title>{`${r.label}: ${(r.rate * 100).toFixed(1)} % (95 % interval ${(r.low * 100).toFixed(1)}–${(r.high * 100).toFixed(1)} %)`}</title>
              </g>
            );
          })}
          <AxisBottom
            top={innerH}
            scale={x}
            numTicks={5}
            tickFormat={(v) => `${Math.round(Number(v) * 100)} %`}
            stroke="var(--rw-line)"
            tickStroke="var(--rw-line)"
            tickLabelProps={{ fill: "var(--rw-muted)", fontSize: 11, textAnchor: "middle" }}
            label="Share of runs ending at the node (bar) with its 95 % interval (whisker)"
            labelProps={{ fill: "var(--rw-muted)", fontSize: 11, textAnchor: "middle" }}
          />
        </Group>
      </svg>
    </figure>
  );
}
