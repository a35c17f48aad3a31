import {
  Background,
  type Connection,
  Controls,
  type Edge,
  type EdgeChange,
  MarkerType,
  MiniMap,
  type NodeChange,
  ReactFlow,
  ReactFlowProvider,
  getNodesBounds,
  useReactFlow,
} from "@xyflow/react";
import { useCallback, useEffect, useImperativeHandle, useMemo, useRef, useState } from "react";
import { useFetcher, useRevalidator } from "react-router";
import {
  type MapDocument,
  type MapEdge,
  type MapNode,
  powerUpSequence,
  type ValidationIssue,
  validateMap,
} from "~/lib/engine";
import { applyChanges, diffDocuments, edgeKindFor, type MapChange } from "~/lib/map-changes";
import { DEFAULT_NODE_SIZE, layoutDocument, withPositions } from "~/lib/map-layout";
import { issueFocus } from "./issue-focus";
import { NodePanel, SettingsPanel } from "./node-panel";
import { type FlowNode, type Mark, NODE_TYPES } from "./nodes";
import { useMapHistory } from "./use-map-history";

export type SaveResult =
  | { ok: true; revision: number; errors?: number }
  | { ok: false; message: string; revision?: number; conflict?: boolean; issues?: ValidationIssue[] };

type SaveState =
  | { kind: "saved" }
  | { kind: "pending" }
  | { kind: "saving" }
  | { kind: "failed"; message: string }
  | { kind: "conflict"; message: string };

const AUTOSAVE_MS = 700;

function newNodeId(kind: MapNode["kind"], doc: MapDocument) {
  for (;;) {
    const id = `${kind}-${Math.random().toString(36).slice(2, 7)}`;
    if (!doc.nodes.some((n) => n.id === id)) return id;
  }
}

function newNode(kind: MapNode["kind"], id: string, position: { x: number; y: number }): MapNode {
  const probe = { text: "", seconds: 30, needsDisassembly: false };
  if (kind === "source") return { id, kind, name: "New source", sourceKind: "other", position };
  if (kind === "rail")
    return { id, kind, name: "NEW_RAIL", nominalV: 3.3, tolerancePct: 5, expected: {}, probe, position };
  if (kind === "signal") return { id, kind, name: "NEW_SIGNAL", highV: 3.3, expected: {}, probe, position };
  return {
    id,
    kind,
    name: "New part",
    partType: "regulator",
    refdes: "",
    fixes: [{ id: "replace", kind: "replace", label: "Replace the part" }],
    position,
  };
}

function isTyping(target: EventTarget | null) {
  const el = target as HTMLElement | null;
  return !!el && (el.isContentEditable || ["INPUT", "TEXTAREA", "SELECT"].includes(el.tagName));
}

/**
 * Lets the page replace the whole draft on the user's word (import, new draft from a version): while a
 * replacement is under way autosave holds off, and the new server revision is taken as ours, not as
 * another lead's edit.
 */
export type DraftReplaceHandle = {
  state: () => { unsaved: number; saving: boolean; revision: number };
  begin: () => void;
  end: () => void;
};

type EditorProps = {
  mapId: string;
  doc: MapDocument;
  revision: number;
  canEdit: boolean;
  onRevision?: (revision: number) => void;
  toolbarExtra?: (state: { revision: number; saved: boolean; errors: number }) => React.ReactNode;
  replaceHandle?: React.Ref<DraftReplaceHandle>;
  /** Shown instead of the role's read-only note, e.g. when a published version is on the canvas. */
  readOnlyNote?: string;
  /** File name of the PNG/SVG picture, without its extension. */
  pictureName?: string;
};

export function MapEditor(props: EditorProps) {
  // The provider gets the nodes with their fixed sizes and a guessed canvas size, so the server already
  // renders every node in place and the browser paints them before the scripts run.
  const [initialNodes] = useState(() => {
    const stage = stagesOf(props.doc);
    return props.doc.nodes.map((n) => toFlowNode(n, undefined, false, !props.canEdit, stage?.[n.id]));
  });
  const [initialEdges] = useState(() => props.doc.edges.map((e) => toFlowEdge(e, false)));
  return (
    <ReactFlowProvider
      initialNodes={initialNodes}
      initialEdges={initialEdges}
      initialWidth={CANVAS_GUESS.width}
      initialHeight={CANVAS_GUESS.height}
      initialMinZoom={MIN_ZOOM}
      fitView
    >
      <EditorInner {...props} />
    </ReactFlowProvider>
  );
}

const CANVAS_GUESS = { width: 900, height: 640 };
const MIN_ZOOM = 0.05;
const READABLE_ZOOM = 0.55;

/** Each node's power-up stage (the engine's topological level), or null while the map has a cycle. */
function stagesOf(doc: MapDocument): Record<string, number> | null {
  const seq = powerUpSequence(doc);
  return seq.ok ? seq.value.level : null;
}

function toFlowNode(
  n: MapNode,
  mark: Mark,
  selected: boolean,
  readOnly: boolean,
  stage: number | undefined,
): FlowNode {
  // Fixed sizes let xyflow show nodes (and lay them out) without waiting to measure each one.
  return {
    id: n.id,
    type: n.kind,
    position: n.position ?? { x: 0, y: 0 },
    data: { node: n, mark, readOnly, stage },
    selected,
    width: DEFAULT_NODE_SIZE.width,
    height: DEFAULT_NODE_SIZE.height,
  } as FlowNode;
}

function toFlowEdge(e: MapEdge, selected: boolean): Edge {
  return {
    id: e.id,
    source: e.from,
    target: e.to,
    selected,
    className: `rw-edge rw-edge-${e.kind}`,
    markerEnd: { type: MarkerType.ArrowClosed, width: 16, height: 16 },
    ariaLabel: `${e.kind} from ${e.from} to ${e.to}`,
  };
}

function EditorInner({
  mapId,
  doc: loadedDoc,
  revision: loadedRevision,
  canEdit,
  onRevision,
  toolbarExtra,
  replaceHandle,
  readOnlyNote,
  pictureName,
}: EditorProps) {
  const readOnly = !canEdit;
  const flow = useReactFlow<FlowNode>();
  const history = useMapHistory(loadedDoc);
  const { doc } = history;
  const [selected, setSelected] = useState<Set<string>>(() => new Set());
  const [selectedEdges, setSelectedEdges] = useState<Set<string>>(() => new Set());
  const [saveState, setSaveState] = useState<SaveState>({ kind: "saved" });
  const [revision, setRevision] = useState(loadedRevision);
  const [layoutMs, setLayoutMs] = useState<number | null>(null);
  const [searchOpen, setSearchOpen] = useState(false);
  const [query, setQuery] = useState("");
  const saved = useRef(loadedDoc);
  const inflight = useRef<MapDocument | null>(null);
  const dragging = useRef(false);
  const measured = useRef(new Map<string, { width: number; height: number }>());
  const reapply = useRef<MapChange[] | null>(null);
  const reloadRequested = useRef(false);
  const replacing = useRef(false);
  const [resumed, setResumed] = useState(0);
  const fetcher = useFetcher<SaveResult>({ key: `map-save-${mapId}` });
  const revalidator = useRevalidator();
  const [validated, setValidated] = useState(loadedDoc);
  const [dragStops, setDragStops] = useState(0);

  // A newer draft from the server (reload after a conflict, import, new draft from a version) replaces ours,
  // unless we hold unsaved edits that nobody asked to drop: then it is reported as a conflict instead.
  // biome-ignore lint/correctness/useExhaustiveDependencies: only a new server revision resets the editor
  useEffect(() => {
    if (loadedRevision <= revision) return;
    const local = diffDocuments(saved.current, history.latest.current);
    if (local.length && !reloadRequested.current && !replacing.current) {
      setSaveState({
        kind: "conflict",
        message: `Another lead changed this map (it is now at revision ${loadedRevision}). Your change was not saved; reload to see their version.`,
      });
      return;
    }
    const next =
      reapply.current?.length && !replacing.current ? applyChanges(loadedDoc, reapply.current) : loadedDoc;
    reapply.current = null;
    reloadRequested.current = false;
    replacing.current = false;
    saved.current = loadedDoc;
    history.reset(next);
    setValidated(next);
    setRevision(loadedRevision);
    setSaveState({ kind: next === loadedDoc ? "saved" : "pending" });
  }, [loadedRevision, loadedDoc]);

  useEffect(() => onRevision?.(revision), [revision, onRevision]);

  // A long map fitted whole would be unreadably small: start at a readable zoom on its left end, where
  // power-up begins (the minimap and Fit view still show all of it).
  const initialView = useCallback(() => {
    const box = document.querySelector(".rw-flow")?.getBoundingClientRect();
    const all = flow.getNodes();
    if (!box || !all.length) return;
    const b = getNodesBounds(all);
    const fit = Math.min(box.width / (b.width + 80), box.height / (b.height + 80));
    if (fit >= READABLE_ZOOM) {
      flow.fitView({ padding: 0.1 });
      return;
    }
    const zoom = Math.min(1, Math.max(READABLE_ZOOM, box.height / (b.height + 80)));
    flow.setViewport({ x: 24 - b.x * zoom, y: box.height / 2 - (b.y + b.height / 2) * zoom, zoom });
  }, [flow]);

  // Validation follows the document, but not every frame of a drag.
  useEffect(() => {
    if (dragging.current) return;
    const t = setTimeout(() => setValidated(doc), 120);
    return () => clearTimeout(t);
  }, [doc]);
  const report = useMemo(() => validateMap(validated), [validated]);
  const stages = useMemo(() => stagesOf(validated), [validated]);
  const issues = report.ok
    ? report.value.issues
    : [{ ...report.error, severity: "error" as const, nodeIds: [] }];
  const errorCount = issues.filter((i) => i.severity === "error").length;
  const marks = useMemo(() => {
    const m = new Map<string, Mark>();
    for (const i of issues)
      for (const id of i.nodeIds)
        if (m.get(id) !== "error") m.set(id, i.severity === "error" ? "error" : "warning");
    return m;
  }, [issues]);

  // --- autosave -------------------------------------------------------------------------------------
  // saved.current moves when a save lands (saveState changes then), so both are inputs here.
  // biome-ignore lint/correctness/useExhaustiveDependencies: saveState marks a moved saved.current
  const pendingChanges = useMemo(() => diffDocuments(saved.current, doc), [doc, saveState]);
  const hasPending = pendingChanges.length > 0;

  // Refs keep sendSave stable, so the autosave timer is not reset by unrelated renders.
  const submitRef = useRef(fetcher.submit);
  submitRef.current = fetcher.submit;
  const revisionRef = useRef(revision);
  revisionRef.current = revision;

  const sendSave = useCallback(() => {
    if (readOnly || inflight.current || dragging.current || replacing.current) return;
    const current = history.latest.current;
    const changes = diffDocuments(saved.current, current);
    if (!changes.length) return;
    inflight.current = current;
    setSaveState({ kind: "saving" });
    submitRef.current(
      { intent: "save", revision: String(revisionRef.current), changes: JSON.stringify(changes) },
      { method: "post", action: `/maps/${mapId}` },
    );
  }, [readOnly, mapId, history.latest]);

  // biome-ignore lint/correctness/useExhaustiveDependencies: every edit restarts the autosave delay
  useEffect(() => {
    if (!hasPending && saveState.kind === "pending") setSaveState({ kind: "saved" });
    if (readOnly || !hasPending || saveState.kind === "conflict" || inflight.current) return;
    setSaveState((s) => (s.kind === "failed" || s.kind === "pending" ? s : { kind: "pending" }));
    const t = setTimeout(sendSave, AUTOSAVE_MS);
    return () => clearTimeout(t);
  }, [doc, dragStops, resumed, hasPending, readOnly, saveState.kind, sendSave]);

  useEffect(() => {
    if (fetcher.state !== "idle" || !inflight.current) return;
    const sent = inflight.current;
    inflight.current = null;
    const result = fetcher.data;
    if (result?.ok) {
      saved.current = sent;
      revisionRef.current = result.revision;
      setRevision(result.revision);
      const more = diffDocuments(sent, history.latest.current).length > 0;
      setSaveState({ kind: more ? "pending" : "saved" });
    } else if (result?.conflict) {
      setSaveState({ kind: "conflict", message: result.message });
    } else {
      setSaveState({ kind: "failed", message: result?.message ?? "The server did not answer." });
    }
  }, [fetcher.state, fetcher.data, history.latest]);

  useImperativeHandle(
    replaceHandle,
    () => ({
      state: () => ({
        unsaved: diffDocuments(saved.current, history.latest.current).length,
        saving: inflight.current !== null,
        revision: revisionRef.current,
      }),
      begin: () => {
        replacing.current = true;
      },
      end: () => {
        replacing.current = false;
        setResumed((n) => n + 1);
      },
    }),
    [history.latest],
  );

  // Leaving with unsaved edits asks first: an edit is never dropped silently.
  useEffect(() => {
    const warn = (e: BeforeUnloadEvent) => {
      if (diffDocuments(saved.current, history.latest.current).length) e.preventDefault();
    };
    window.addEventListener("beforeunload", warn);
    return () => window.removeEventListener("beforeunload", warn);
  }, [history.latest]);

  // --- flow nodes and edges ---------------------------------------------------------------------------
  type Cached = { src: MapNode; mark: Mark; sel: boolean; stage: number | undefined; rf: FlowNode };
  const cache = useRef(new Map<string, Cached>());
  const nodes = useMemo(() => {
    const next = new Map<string, Cached>();
    const out = doc.nodes.map((n) => {
      const mark = marks.get(n.id);
      const sel = selected.has(n.id);
      const stage = stages?.[n.id];
      const c = cache.current.get(n.id);
      if (c && c.src === n && c.mark === mark && c.sel === sel && c.stage === stage) {
        next.set(n.id, c);
        return c.rf;
      }
      const rf = toFlowNode(n, mark, sel, readOnly, stage);
      next.set(n.id, { src: n, mark, sel, stage, rf });
      return rf;
    });
    cache.current = next;
    return out;
  }, [doc.nodes, marks, selected, readOnly, stages]);

  const edges = useMemo<Edge[]>(
    () => doc.edges.map((e) => toFlowEdge(e, selectedEdges.has(e.id))),
    [doc.edges, selectedEdges],
  );

  const onNodesChange = useCallback(
    (changes: NodeChange<FlowNode>[]) => {
      let moved: Map<string, { x: number; y: number }> | null = null;
      let sel: Set<string> | null = null;
      for (const c of changes) {
        if (c.type === "dimensions" && c.dimensions) measured.current.set(c.id, c.dimensions);
        else if (c.type === "position" && c.position && !readOnly) {
          moved ??= new Map();
          moved.set(c.id, { x: Math.round(c.position.x), y: Math.round(c.position.y) });
        } else if (c.type === "select") {
          sel ??= new Set(selected);
          if (c.selected) sel.add(c.id);
          else sel.delete(c.id);
        }
      }
      if (moved) {
        const m = moved;
        history.set((d) => withPositions(d, m), false);
      }
      if (sel) setSelected(sel);
    },
    [history, readOnly, selected],
  );

  const onEdgesChange = useCallback(
    (changes: EdgeChange[]) => {
      let sel: Set<string> | null = null;
      for (const c of changes)
        if (c.type === "select") {
          sel ??= new Set(selectedEdges);
          if (c.selected) sel.add(c.id);
          else sel.delete(c.id);
        }
      if (sel) setSelectedEdges(sel);
    },
    [selectedEdges],
  );

  const kindOf = useCallback(
    (id: string | null) => (id ? history.latest.current.nodes.find((n) => n.id === id)?.kind : undefined),
    [history.latest],
  );

  const isValidConnection = useCallback(
    (c: Connection | Edge) => {
      const a = kindOf(c.source);
      const b = kindOf(c.target);
      if (!a || !b || c.source === c.target) return false;
      if (!edgeKindFor(a, b)) return false;
      return !history.latest.current.edges.some((e) => e.from === c.source && e.to === c.target);
    },
    [kindOf, history.latest],
  );

  const onConnect = useCallback(
    (c: Connection) => {
      const a = kindOf(c.source);
      const b = kindOf(c.target);
      const kind = a && b ? edgeKindFor(a, b) : null;
      if (!kind || readOnly) return;
      history.set((d) => {
        let id = `${c.source}--${c.target}`;
        let k = 2;
        while (d.edges.some((e) => e.id === id)) id = `${c.source}--${c.target}-${k++}`;
        const edge: MapEdge = { id: id.slice(0, 64), from: c.source, to: c.target, kind };
        return { ...d, edges: [...d.edges, edge] };
      });
    },
    [kindOf, readOnly, history],
  );

  // --- commands ---------------------------------------------------------------------------------------
  const addNode = (kind: MapNode["kind"]) => {
    const box = document.querySelector(".react-flow")?.getBoundingClientRect();
    const center = box
      ? flow.screenToFlowPosition({ x: box.left + box.width / 2, y: box.top + box.height / 2 })
      : { x: 0, y: 0 };
    const id = newNodeId(kind, doc);
    // Start at the centre of the view and step down until the new node overlaps none.
    const { width: w, height: h } = DEFAULT_NODE_SIZE;
    const x = Math.round(center.x - w / 2);
    let y = Math.round(center.y - h / 2);
    const overlaps = (yy: number) =>
      doc.nodes.some((m) => {
        const p = m.position ?? { x: 0, y: 0 };
        return Math.abs(p.x - x) < w + 8 && Math.abs(p.y - yy) < h + 8;
      });
    for (let k = 0; k < 200 && overlaps(y); k++) y += h + 16;
    const n = newNode(kind, id, { x, y });
    history.set((d) => ({ ...d, nodes: [...d.nodes, n] }));
    setSelected(new Set([id]));
    setSelectedEdges(new Set());
  };

  const deleteSelection = useCallback(() => {
    if (readOnly || (!selected.size && !selectedEdges.size)) return;
    history.set((d) => ({
      ...d,
      nodes: d.nodes.filter((n) => !selected.has(n.id)),
      edges: d.edges.filter((e) => !selectedEdges.has(e.id) && !selected.has(e.from) && !selected.has(e.to)),
    }));
    setSelected(new Set());
    setSelectedEdges(new Set());
  }, [readOnly, selected, selectedEdges, history]);

  const duplicateSelection = useCallback(() => {
    if (readOnly || !selected.size) return;
    const d = history.latest.current;
    const copies = new Map<string, string>();
    const added: MapNode[] = [];
    for (const n of d.nodes) {
      if (!selected.has(n.id)) continue;
      const id = newNodeId(n.kind, { ...d, nodes: [...d.nodes, ...added] });
      copies.set(n.id, id);
      const p = n.position ?? { x: 0, y: 0 };
      const copy = { ...n, id, name: `${n.name} copy`.slice(0, 120), position: { x: p.x + 40, y: p.y + 40 } };
      if (copy.kind === "part") copy.refdes = "";
      added.push(copy as MapNode);
    }
    // Edges among the copied nodes come along; edges to the rest of the map do not.
    const addedEdges = d.edges
      .filter((e) => copies.has(e.from) && copies.has(e.to))
      .map((e) => {
        const from = copies.get(e.from)!;
        const to = copies.get(e.to)!;
        return { ...e, id: `${from}--${to}`, from, to };
      });
    history.set({ ...d, nodes: [...d.nodes, ...added], edges: [...d.edges, ...addedEdges] });
    setSelected(new Set(copies.values()));
  }, [readOnly, selected, history]);

  const focusNodes = useCallback(
    (ids: string[], edgeIds: string[] = []) => {
      const present = ids.filter((id) => history.latest.current.nodes.some((n) => n.id === id));
      if (!present.length) return;
      setSelected(new Set(present));
      setSelectedEdges(new Set(edgeIds));
      flow.fitView({ nodes: present.map((id) => ({ id })), duration: 300, maxZoom: 1.3, padding: 0.4 });
    },
    [flow, history.latest],
  );

  const autoLayout = () => {
    const t0 = performance.now();
    const pos = layoutDocument(history.latest.current, (id) => measured.current.get(id));
    history.set((d) => withPositions(d, pos));
    requestAnimationFrame(() => {
      initialView();
      requestAnimationFrame(() => setLayoutMs(Math.round(performance.now() - t0)));
    });
  };

  useEffect(() => {
    const onKey = (e: KeyboardEvent) => {
      const mod = e.ctrlKey || e.metaKey;
      if (mod && e.key.toLowerCase() === "k") {
        e.preventDefault();
        setSearchOpen(true);
        return;
      }
      if (isTyping(e.target)) return;
      if (e.key === "/") {
        e.preventDefault();
        setSearchOpen(true);
      } else if (e.key === "Escape") {
        setSearchOpen(false);
      } else if (readOnly) {
        return;
      } else if (e.key === "Delete" || e.key === "Backspace") {
        e.preventDefault();
        deleteSelection();
      } else if (mod && e.key.toLowerCase() === "z") {
        e.preventDefault();
        if (e.shiftKey) history.redo();
        else history.undo();
      } else if (mod && e.key.toLowerCase() === "y") {
        e.preventDefault();
        history.redo();
      } else if (mod && e.key.toLowerCase() === "d") {
        e.preventDefault();
        duplicateSelection();
      }
    };
    window.addEventListener("keydown", onKey);
    return () => window.removeEventListener("keydown", onKey);
  }, [readOnly, deleteSelection, duplicateSelection, history]);

  const exportPicture = async (format: "png" | "svg") => {
    const { toPng, toSvg } = await import("html-to-image");
    const { getViewportForBounds } = await import("@xyflow/react");
    const el = document.querySelector<HTMLElement>(".react-flow__viewport");
    if (!el) return;
    const bounds = getNodesBounds(flow.getNodes());
    const width = Math.min(6000, Math.max(800, Math.ceil(bounds.width + 80)));
    const height = Math.min(6000, Math.max(500, Math.ceil(bounds.height + 80)));
    const vp = getViewportForBounds(bounds, width, height, 0.1, 2, 0.05);
    const bg = getComputedStyle(document.documentElement).getPropertyValue("--rw-paper") || "#ffffff";
    const options = {
      backgroundColor: bg,
      width,
      height,
      style: {
        width: `${width}px`,
        height: `${height}px`,
        transform: `translate(${vp.x}px, ${vp.y}px) scale(${vp.zoom})`,
      },
    };
    const url = format === "png" ? await toPng(el, options) : await toSvg(el, options);
    const a = document.createElement("a");
    a.href = url;
    a.download = `${pictureName ?? `map-${mapId}`}.${format}`;
    a.click();
  };

  const selectedNode = selected.size === 1 ? doc.nodes.find((n) => selected.has(n.id)) : undefined;
  const updateNode = (n: MapNode) =>
    history.set((d) => ({ ...d, nodes: d.nodes.map((x) => (x.id === n.id ? n : x)) }));

  const matches = query.trim()
    ? doc.nodes
        .filter((n) =>
          `${n.name} ${n.kind === "part" ? n.refdes : ""} ${n.id}`
            .toLowerCase()
            .includes(query.trim().toLowerCase()),
        )
        .slice(0, 8)
    : [];

  const status = readOnly
    ? {
        text: readOnlyNote ?? "Read only: your role can view this map but not change it.",
        tone: "text-muted",
      }
    : saveState.kind === "saving"
      ? { text: "Saving…", tone: "text-muted" }
      : saveState.kind === "pending" || (saveState.kind === "saved" && hasPending)
        ? { text: "Unsaved changes", tone: "text-warn" }
        : saveState.kind === "failed"
          ? { text: `Save failed: ${saveState.message}`, tone: "text-bad" }
          : saveState.kind === "conflict"
            ? { text: "Not saved: another lead changed this map", tone: "text-bad" }
            : { text: `All changes saved · revision ${revision}`, tone: "text-ok" };

  return (
    <div
      className="flex flex-col gap-3"
      data-testid="map-editor"
      data-revision={revision}
      data-layout-ms={layoutMs ?? undefined}
      data-save-state={
        readOnly ? "read-only" : hasPending && saveState.kind === "saved" ? "pending" : saveState.kind
      }
    >
      <div className="flex flex-wrap items-center gap-2">
        {readOnly ? null : (
          <>
            <span className="text-xs font-semibold uppercase tracking-wider text-muted">Add</span>
            <button type="button" className="btn px-3 py-1" onClick={() => addNode("source")}>
              Source
            </button>
            <button type="button" className="btn px-3 py-1" onClick={() => addNode("rail")}>
              Rail
            </button>
            <button type="button" className="btn px-3 py-1" onClick={() => addNode("signal")}>
              Signal
            </button>
            <button type="button" className="btn px-3 py-1" onClick={() => addNode("part")}>
              Part
            </button>
            <span className="mx-1 h-6 w-px bg-line" />
            <button
              type="button"
              className="btn px-3 py-1"
              onClick={history.undo}
              disabled={!history.canUndo}
              title="Ctrl+Z"
            >
              Undo
            </button>
            <button
              type="button"
              className="btn px-3 py-1"
              onClick={history.redo}
              disabled={!history.canRedo}
              title="Ctrl+Shift+Z"
            >
              Redo
            </button>
            <button
              type="button"
              className="btn px-3 py-1"
              onClick={duplicateSelection}
              disabled={!selected.size}
              title="Ctrl+D"
            >
              Duplicate
            </button>
            <button
              type="button"
              className="btn px-3 py-1"
              onClick={deleteSelection}
              disabled={!selected.size && !selectedEdges.size}
              title="Delete"
            >
              Delete
            </button>
            <span className="mx-1 h-6 w-px bg-line" />
            <button type="button" className="btn px-3 py-1" onClick={autoLayout}>
              Auto-layout
            </button>
          </>
        )}
        <button
          type="button"
          className="btn px-3 py-1"
          onClick={() => flow.fitView({ padding: 0.1, duration: 200 })}
        >
          Fit view
        </button>
        <button
          type="button"
          className="btn px-3 py-1"
          onClick={() => setSearchOpen(true)}
          title="Ctrl+K or /"
        >
          Find node
        </button>
        <button type="button" className="btn px-3 py-1" onClick={() => exportPicture("png")}>
          PNG
        </button>
        <button type="button" className="btn px-3 py-1" onClick={() => exportPicture("svg")}>
          SVG
        </button>
        <span
          role="status"
          className={`ml-auto text-sm font-medium ${status.tone}`}
          data-testid="save-status"
        >
          {status.text}
        </span>
      </div>

      {saveState.kind === "conflict" ? (
        <div role="alert" className="rounded-md border border-bad bg-bad-soft p-3 text-sm">
          <p className="font-medium text-bad">{saveState.message}</p>
          <p className="mt-1">
            Your unsaved changes are still on the canvas ({pendingChanges.length} change
            {pendingChanges.length === 1 ? "" : "s"}:{" "}
            {pendingChanges
              .slice(0, 6)
              .map((c) =>
                c.op === "put-node"
                  ? c.node.name
                  : c.op === "settings"
                    ? "settings"
                    : c.op === "put-edge"
                      ? `link ${c.edge.id}`
                      : `removed ${c.id}`,
              )
              .join(", ")}
            {pendingChanges.length > 6 ? ", …" : ""}).
          </p>
          <div className="mt-2 flex flex-wrap gap-2">
            <button
              type="button"
              className="btn btn-primary px-3 py-1"
              onClick={() => {
                reapply.current = pendingChanges;
                reloadRequested.current = true;
                revalidator.revalidate();
              }}
            >
              Reload their version and re-apply my changes
            </button>
            <button
              type="button"
              className="btn px-3 py-1"
              onClick={() => {
                reapply.current = null;
                reloadRequested.current = true;
                revalidator.revalidate();
              }}
            >
              Reload and discard my changes
            </button>
          </div>
        </div>
      ) : null}
      {saveState.kind === "failed" ? (
        <div
          role="alert"
          className="flex items-center gap-3 rounded-md border border-bad bg-bad-soft p-3 text-sm"
        >
          <span>Your edits are kept here and were not saved.</span>
          <button
            type="button"
            className="btn px-3 py-1"
            onClick={() => {
              setSaveState({ kind: "pending" });
              sendSave();
            }}
          >
            Try again
          </button>
        </div>
      ) : null}

      {searchOpen ? (
        <section className="card flex flex-col gap-2 p-3" aria-label="Find node">
          <label htmlFor="node-search" className="text-sm font-medium">
            Find a node by name, reference designator or id
          </label>
          <input
            id="node-search"
            className="field-input"
            autoFocus
            value={query}
            onChange={(e) => setQuery(e.target.value)}
            onKeyDown={(e) => {
              if (e.key === "Enter" && matches[0]) {
                focusNodes([matches[0].id]);
                setSearchOpen(false);
              } else if (e.key === "Escape") setSearchOpen(false);
            }}
          />
          <ul className="flex flex-wrap gap-1">
            {matches.map((n) => (
              <li key={n.id}>
                <button
                  type="button"
                  className="btn px-2 py-1 text-xs"
                  onClick={() => {
                    focusNodes([n.id]);
                    setSearchOpen(false);
                  }}
                >
                  {n.kind === "part" && n.refdes ? `${n.refdes} · ` : ""}
                  {n.name}
                </button>
              </li>
            ))}
          </ul>
        </section>
      ) : null}

      <div className="grid gap-3 lg:grid-cols-[1fr_340px]">
        <div className="h-[640px] overflow-hidden rounded-lg border border-line bg-sunken">
          <ReactFlow<FlowNode>
            nodes={nodes}
            edges={edges}
            nodeTypes={NODE_TYPES}
            onNodesChange={onNodesChange}
            onEdgesChange={onEdgesChange}
            onConnect={onConnect}
            isValidConnection={isValidConnection}
            onNodeDragStart={() => {
              dragging.current = true;
              history.checkpoint();
            }}
            onNodeDragStop={() => {
              dragging.current = false;
              setValidated(history.latest.current);
              setDragStops((n) => n + 1);
            }}
            onSelectionDragStart={() => {
              dragging.current = true;
              history.checkpoint();
            }}
            onSelectionDragStop={() => {
              dragging.current = false;
              setValidated(history.latest.current);
              setDragStops((n) => n + 1);
            }}
            onPaneClick={() => {
              setSelected(new Set());
              setSelectedEdges(new Set());
            }}
            nodesDraggable={!readOnly}
            nodesConnectable={!readOnly}
            deleteKeyCode={null}
            multiSelectionKeyCode={["Meta", "Control"]}
            selectionKeyCode="Shift"
            onInit={initialView}
            minZoom={MIN_ZOOM}
            proOptions={{ hideAttribution: true }}
            className="rw-flow"
          >
            <Background gap={24} />
            <MiniMap pannable zoomable nodeStrokeWidth={3} ariaLabel="Map overview" />
            <Controls showInteractive={false} />
          </ReactFlow>
        </div>
        <aside className="card max-h-[640px] overflow-y-auto p-4" aria-label="Selected node">
          {selectedNode ? (
            <NodePanel
              key={selectedNode.id}
              node={selectedNode}
              onChange={updateNode}
              readOnly={readOnly}
              mapId={mapId}
            />
          ) : selected.size > 1 ? (
            <p className="text-sm">
              {selected.size} nodes selected. Drag one to move them together; Ctrl+D duplicates, Delete
              removes.
            </p>
          ) : (
            <SettingsPanel
              settings={doc.settings}
              readOnly={readOnly}
              onChange={(settings) => history.set((d) => ({ ...d, settings }))}
            />
          )}
        </aside>
      </div>

      <section className="card p-4" aria-label="Validation">
        <div className="flex flex-wrap items-center justify-between gap-2">
          <h2 className="font-semibold">
            Checks{" "}
            <span className={errorCount ? "text-bad" : "text-ok"}>
              {errorCount
                ? `${errorCount} error${errorCount === 1 ? "" : "s"}`
                : `no errors${issues.length ? `, ${issues.length} warning${issues.length === 1 ? "" : "s"}` : ""}`}
            </span>
          </h2>
          {toolbarExtra?.({ revision, saved: !hasPending && saveState.kind === "saved", errors: errorCount })}
        </div>
        {issues.length ? (
          <ul className="mt-2 flex flex-col gap-1" data-testid="issues">
            {issues.map((i, k) => (
              <li key={`${i.code}-${k}`}>
                <button
                  type="button"
                  className={`w-full rounded px-2 py-1 text-left text-sm hover:bg-sunken ${i.severity === "error" ? "text-bad" : "text-warn"}`}
                  onClick={() => {
                    const f = issueFocus(i, history.latest.current);
                    focusNodes(f.nodeIds, f.edgeIds);
                  }}
                  data-code={i.code}
                >
                  <span className="font-semibold">{i.severity === "error" ? "Error" : "Warning"}:</span>{" "}
                  <span className="text-ink">{i.message}</span>
                </button>
              </li>
            ))}
          </ul>
        ) : (
          <p className="mt-2 text-sm text-muted">The engine found nothing to fix.</p>
        )}
      </section>
    </div>
  );
}
