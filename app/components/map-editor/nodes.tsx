import { Handle, type Node, type NodeProps, Position } from "@xyflow/react";
import { memo } from "react";
import type { MapNode, PartNode, RailNode, SignalNode, SourceNode } from "~/lib/engine";

export type Mark = "error" | "warning" | undefined;
/** `stage` is the node's power-up stage computed by the engine; undefined while the map has a cycle. */
export type NodeData<T extends MapNode> = { node: T; mark: Mark; readOnly: boolean; stage?: number };
export type SourceFlowNode = Node<NodeData<SourceNode>, "source">;
export type RailFlowNode = Node<NodeData<RailNode>, "rail">;
export type SignalFlowNode = Node<NodeData<SignalNode>, "signal">;
export type PartFlowNode = Node<NodeData<PartNode>, "part">;
export type FlowNode = SourceFlowNode | RailFlowNode | SignalFlowNode | PartFlowNode;

const KIND_LABEL = { source: "Source", rail: "Rail", signal: "Signal", part: "Part" } as const;
// Each kind has its own edge stripe and handle colour; the stripe keeps kinds apart in both themes.
const STRIPE = {
  source: "border-l-ok",
  rail: "border-l-accent",
  signal: "border-l-info",
  part: "border-l-muted",
} as const;

function volts(v: number) {
  return `${Number(v.toPrecision(4))} V`;
}

/** A rail's live window as the map states it: a min..max window (e.g. a battery pack) or nominal ± tolerance. */
function railDetail(n: RailFlowNode["data"]["node"]) {
  const w = n.expected.voltage;
  if (w && "min" in w) return `${Number(w.min.toPrecision(4))}–${volts(w.max)}`;
  return `${volts(n.nominalV)} ±${n.tolerancePct}%`;
}

function Shell({
  kind,
  selected,
  mark,
  title,
  detail,
  stage,
  badge,
  inHandle,
  outHandle,
  readOnly,
}: {
  kind: MapNode["kind"];
  selected: boolean;
  mark: Mark;
  title: string;
  detail: string;
  stage: number | undefined;
  badge?: string;
  inHandle: boolean;
  outHandle: boolean;
  readOnly: boolean;
}) {
  return (
    <div
      className={`rw-node h-[76px] w-[200px] overflow-hidden rounded-md border border-l-4 bg-panel px-3 py-2 text-ink shadow-sm ${STRIPE[kind]} ${
        selected ? "border-accent ring-2 ring-accent" : mark === "error" ? "border-bad" : "border-line"
      }`}
      data-kind={kind}
      data-mark={mark ?? "none"}
      data-stage={stage ?? "none"}
    >
      {inHandle ? (
        <Handle
          type="target"
          position={Position.Left}
          isConnectable={!readOnly}
          className="!h-3 !w-3 !border-2 !border-panel !bg-muted"
        />
      ) : null}
      <div className="flex items-center justify-between gap-2 text-[10px] font-semibold uppercase tracking-wider text-muted">
        <span className="flex items-center gap-1">
          {KIND_LABEL[kind]}
          <span
            className="rounded border border-line px-1 font-mono normal-case tracking-normal text-ink"
            title={
              stage === undefined
                ? "No power-up stage while the map has a cycle"
                : `Power-up stage ${stage} (0 comes up first)`
            }
          >
            {stage === undefined ? "stage ?" : `stage ${stage}`}
          </span>
        </span>
        <span className="flex items-center gap-1">
          {badge ? (
            <span
              className="rounded bg-sunken px-1 py-px font-mono normal-case tracking-normal text-ink"
              title={`Tagged ${badge}: the deepest sleep state in which it stays powered`}
            >
              {badge}
            </span>
          ) : null}
          {mark === "error" ? (
            <span className="rounded bg-bad-soft px-1 text-bad" title="Has an error">
              ✕ error
            </span>
          ) : mark === "warning" ? (
            <span className="rounded bg-warn-soft px-1 text-warn" title="Has a warning">
              ! check
            </span>
          ) : null}
        </span>
      </div>
      <div className="truncate font-medium" title={title}>
        {title || "(unnamed)"}
      </div>
      <div className="truncate font-mono text-xs text-muted">{detail}</div>
      {outHandle ? (
        <Handle
          type="source"
          position={Position.Right}
          isConnectable={!readOnly}
          className="!h-3 !w-3 !border-2 !border-panel !bg-accent"
        />
      ) : null}
    </div>
  );
}

const SourceView = memo(function SourceView({ data, selected }: NodeProps<SourceFlowNode>) {
  const n = data.node;
  return (
    <Shell
      kind="source"
      selected={selected}
      mark={data.mark}
      stage={data.stage}
      title={n.name}
      detail={n.sourceKind ?? "source"}
      inHandle={false}
      outHandle
      readOnly={data.readOnly}
    />
  );
});

const RailView = memo(function RailView({ data, selected }: NodeProps<RailFlowNode>) {
  const n = data.node;
  return (
    <Shell
      kind="rail"
      selected={selected}
      mark={data.mark}
      stage={data.stage}
      title={n.name}
      detail={railDetail(n)}
      badge={n.stage}
      inHandle
      outHandle
      readOnly={data.readOnly}
    />
  );
});

const SignalView = memo(function SignalView({ data, selected }: NodeProps<SignalFlowNode>) {
  const n = data.node;
  return (
    <Shell
      kind="signal"
      selected={selected}
      mark={data.mark}
      stage={data.stage}
      title={n.name}
      detail={`${n.activeLow ? "active low" : "active high"} · ${volts(n.highV)}`}
      badge={n.stage}
      inHandle
      outHandle
      readOnly={data.readOnly}
    />
  );
});

const PartView = memo(function PartView({ data, selected }: NodeProps<PartFlowNode>) {
  const n = data.node;
  return (
    <Shell
      kind="part"
      selected={selected}
      mark={data.mark}
      stage={data.stage}
      title={`${n.refdes ? `${n.refdes} · ` : ""}${n.name}`}
      detail={`${n.partType}${n.value ? ` · ${n.value}` : ""}`}
      inHandle
      outHandle
      readOnly={data.readOnly}
    />
  );
});

// Defined once at module level so xyflow does not re-create node components on every render.
export const NODE_TYPES = { source: SourceView, rail: RailView, signal: SignalView, part: PartView };
