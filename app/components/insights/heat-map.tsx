import {
  Background,
  Controls,
  type Edge,
  Handle,
  type Node,
  type NodeProps,
  Position,
  ReactFlow,
} from "@xyflow/react";
import { memo } from "react";
import { HEAT_STEPS, heatStep } from "~/lib/heat-scale";

export type HeatNodeData = {
  title: string;
  detail: string;
  kind: "source" | "rail" | "signal" | "part";
  /** null for nodes that cannot be a finding (sources). */
  rate: number | null;
  failures: number;
  runs: number;
};
export type HeatFlowNode = Node<HeatNodeData, "heat">;

export const HEAT_NODE_SIZE = { width: 200, height: 76 };

const KIND_LABEL = { source: "Source", rail: "Rail", signal: "Signal", part: "Part" } as const;

const HeatNode = memo(function HeatNode({ data }: NodeProps<HeatFlowNode>) {
  const step = data.rate == null ? null : heatStep(data.rate);
  const style =
    step == null
      ? { background: "var(--rw-panel)", color: "var(--rw-ink)", borderStyle: "dashed" as const }
      : { background: `var(--rw-heat-${step})`, color: `var(--rw-heat-ink-${step})` };
  return (
    <div
      className="rounded-md border border-line px-3 py-2 text-xs shadow-sm"
      style={{ ...style, width: HEAT_NODE_SIZE.width, height: HEAT_NODE_SIZE.height }}
      data-step={step ?? "none"}
    >
      <Handle type="target" position={Position.Left} isConnectable={false} className="!opacity-0" />
      <div className="flex items-baseline justify-between gap-2">
        <span className="truncate font-semibold">{data.title}</span>
        <span className="shrink-0">{KIND_LABEL[data.kind]}</span>
      </div>
      <div className="truncate">{data.detail}</div>
      <div className="mt-1 font-mono font-semibold tabular-nums">
        {data.rate == null
          ? "not a finding"
          : `${(data.rate * 100).toFixed(1)} % · ${data.failures}/${data.runs}${data.kind === "part" ? "" : " shorts"}`}
      </div>
      <Handle type="source" position={Position.Right} isConnectable={false} className="!opacity-0" />
    </div>
  );
});

const nodeTypes = { heat: HeatNode };

/** The published map, read-only, each node shaded by its failure rate (single-hue scale plus the number). */
export function HeatMap({ nodes, edges, title }: { nodes: HeatFlowNode[]; edges: Edge[]; title: string }) {
  return (
    <div className="flex flex-col gap-3">
      <HeatLegend />
      <section
        className="rw-heatmap h-[70vh] min-h-[420px] overflow-hidden rounded-lg border border-line bg-sunken"
        aria-label={title}
      >
        <ReactFlow
          nodes={nodes}
          edges={edges}
          nodeTypes={nodeTypes}
          fitView
          // Keep labels readable on long maps: start no smaller than this and let the user pan.
          fitViewOptions={{ minZoom: 0.6, maxZoom: 1.1 }}
          nodesDraggable={false}
          nodesConnectable={false}
          elementsSelectable={false}
          edgesFocusable={false}
          nodesFocusable={false}
          proOptions={{ hideAttribution: true }}
          minZoom={0.2}
        >
          <Background gap={24} color="var(--rw-line)" />
          <Controls showInteractive={false} />
        </ReactFlow>
      </section>
    </div>
  );
}

export function HeatLegend() {
  return (
    <div className="flex flex-wrap items-center gap-3 text-sm">
      <span className="font-medium">Failure rate</span>
      {HEAT_STEPS.map((s, i) => (
        <span key={s.label} className="flex items-center gap-1">
          <span
            aria-hidden="true"
            className="inline-block h-4 w-6 rounded-sm border border-line"
            style={{ background: `var(--rw-heat-${i})` }}
          />
          {s.label}
        </span>
      ))}
      <span className="flex items-center gap-1">
        <span
          aria-hidden="true"
          className="inline-block h-4 w-6 rounded-sm border border-dashed border-line bg-panel"
        />
        source (never a finding)
      </span>
      <span className="text-muted">Each node also shows its rate and counts (failures/runs).</span>
    </div>
  );
}
