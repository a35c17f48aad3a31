import { useCallback, useRef, useState } from "react";
import type { MapDocument } from "~/lib/engine";

const LIMIT = 200;

/** The draft document with undo/redo; snapshots share unchanged node objects, so each costs little. */
export function useMapHistory(initial: MapDocument) {
  const [doc, setDocState] = useState(initial);
  const past = useRef<MapDocument[]>([]);
  const future = useRef<MapDocument[]>([]);
  const current = useRef(initial);
  const [, force] = useState(0);

  const set = useCallback((next: MapDocument | ((d: MapDocument) => MapDocument), record = true) => {
    const value = typeof next === "function" ? next(current.current) : next;
    if (value === current.current) return;
    if (record) {
      past.current.push(current.current);
      if (past.current.length > LIMIT) past.current.shift();
      future.current = [];
    }
    current.current = value;
    setDocState(value);
  }, []);

  /** Records the present as an undo step without changing it (before a drag that updates in place). */
  const checkpoint = useCallback(() => {
    past.current.push(current.current);
    if (past.current.length > LIMIT) past.current.shift();
    future.current = [];
    force((x) => x + 1);
  }, []);

  const undo = useCallback(() => {
    const prev = past.current.pop();
    if (!prev) return;
    future.current.push(current.current);
    current.current = prev;
    setDocState(prev);
  }, []);

  const redo = useCallback(() => {
    const next = future.current.pop();
    if (!next) return;
    past.current.push(current.current);
    current.current = next;
    setDocState(next);
  }, []);

  const reset = useCallback((value: MapDocument) => {
    past.current = [];
    future.current = [];
    current.current = value;
    setDocState(value);
  }, []);

  return {
    doc,
    set,
    checkpoint,
    undo,
    redo,
    reset,
    canUndo: past.current.length > 0,
    canRedo: future.current.length > 0,
    latest: current,
  };
}
