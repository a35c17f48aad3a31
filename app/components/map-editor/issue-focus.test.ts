import { describe, expect, it } from "vitest";
import { type MapDocument, validateMap } from "~/lib/engine";
import { OM_5150_MAP } from "../../../seed/maps/om-5150";
import { issueFocus } from "./issue-focus";

describe("clicking a validation problem", () => {
  it("focuses the endpoints of an edge when the problem names only that edge", () => {
    const [first, second] = OM_5150_MAP.edges;
    // Two edges with one id: the engine names the edge, not a node.
    const doc: MapDocument = { ...OM_5150_MAP, edges: [...OM_5150_MAP.edges, { ...second, id: first.id }] };
    const report = validateMap(doc);
    if (!report.ok) throw new Error(report.error.message);
    const issue = report.value.issues.find((i) => i.code === "duplicate-id");
    expect(issue).toMatchObject({ nodeIds: [], edgeIds: [first.id] });
    const focus = issueFocus(issue!, doc);
    expect(focus.edgeIds).toEqual([first.id]);
    expect(focus.nodeIds.sort()).toEqual([...new Set([first.from, first.to, second.from, second.to])].sort());
  });

  it("keeps to the nodes a problem names, and skips ids no longer in the map", () => {
    const doc = OM_5150_MAP;
    const e = doc.edges[3];
    expect(issueFocus({ nodeIds: [e.to, "gone"], edgeIds: [e.id] }, doc)).toEqual({
      nodeIds: [e.to],
      edgeIds: [e.id],
    });
  });

  it("falls back to the edge's one remaining endpoint when the other is missing", () => {
    const doc: MapDocument = {
      ...OM_5150_MAP,
      edges: [{ id: "loose", from: "vsys", to: "ghost", kind: "feeds" }],
    };
    expect(issueFocus({ nodeIds: [], edgeIds: ["loose"] }, doc)).toEqual({
      nodeIds: ["vsys"],
      edgeIds: ["loose"],
    });
  });
});
