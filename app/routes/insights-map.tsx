import "@xyflow/react/dist/style.css";
import type { Edge } from "@xyflow/react";
import { and, eq } from "drizzle-orm";
import { Link } from "react-router";
import { type HeatFlowNode, HEAT_NODE_SIZE, HeatMap } from "~/components/insights/heat-map";
import { InsightsFilterForm } from "~/components/insights/filter-form";
import { PageHeader } from "~/components/page-header";
import { parseMapDocument } from "~/lib/engine";
import { filterQuery, parseInsightsFilter } from "~/lib/insights-filters";
import { layoutDocument } from "~/lib/map-layout";
import { notFound, requireMember } from "~/server/auth.server";
import { db } from "~/server/db.server";
import { reportsDb } from "~/server/read-thread.server";
import { getFilterChoices, getHotSpots } from "~/server/insights.server";
import { indexMissingVersionNodes } from "~/server/map-version-nodes.server";
import { boards, maps, mapVersions } from "~/server/schema.server";
import type { Route } from "./+types/insights-map";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { shop } = await requireMember(request, { permission: "view:insights" });
  const version = await db
    .select({
      id: mapVersions.id,
      number: mapVersions.number,
      document: mapVersions.document,
      mapName: maps.name,
      board: boards,
    })
    .from(mapVersions)
    .innerJoin(maps, eq(maps.id, mapVersions.mapId))
    .innerJoin(boards, eq(boards.id, maps.boardId))
    .where(and(eq(mapVersions.id, params.versionId), eq(mapVersions.shopId, shop.id)))
    .get();
  if (!version) notFound("That map version");
  const doc = parseMapDocument(version.document);
  if (!doc.ok)
    throw new Response(`This version's document cannot be drawn: ${doc.error.message}`, { status: 422 });
  await indexMissingVersionNodes(db, shop.id);
  const { filter, errors } = parseInsightsFilter(new URL(request.url).searchParams);
  // Rates for this board across its versions (node ids are stable), within the page's other filters; with a
  // version chosen, for the version this page draws.
  const boardFilter = {
    ...filter,
    boardId: version.board.id,
    versionId: filter.versionId ? version.id : undefined,
  };
  const [choices, hotSpots] = await Promise.all([
    getFilterChoices(db, shop.id),
    getHotSpots(reportsDb(), shop.id, boardFilter),
  ]);
  const byNode = new Map(hotSpots.map((h) => [h.nodeId, h]));
  const needsLayout = doc.value.nodes.some((n) => !n.position);
  const laidOut = needsLayout ? layoutDocument(doc.value, () => HEAT_NODE_SIZE) : null;
  const nodes: HeatFlowNode[] = doc.value.nodes.map((n) => {
    const h = byNode.get(n.id);
    return {
      id: n.id,
      type: "heat",
      position: n.position ?? laidOut?.get(n.id) ?? { x: 0, y: 0 },
      width: HEAT_NODE_SIZE.width,
      height: HEAT_NODE_SIZE.height,
      data: {
        title: n.kind === "part" ? n.refdes || n.name : n.name,
        detail:
          n.kind === "part"
            ? n.name
            : n.kind === "rail"
              ? `${n.nominalV} V`
              : n.kind === "signal"
                ? "logic signal"
                : "outside condition",
        kind: n.kind,
        rate: n.kind === "source" ? null : (h?.rate ?? 0),
        failures: h?.failures ?? 0,
        runs: h?.runs ?? 0,
      },
    };
  });
  const edges = doc.value.edges.map((e) => ({ id: e.id, source: e.from, target: e.to }));
  const b = version.board;
  return {
    title: `${b.boardNumber}${b.revision ? ` rev ${b.revision}` : ""} · ${version.mapName} · version ${version.number}`,
    nodes,
    edges,
    filter: boardFilter,
    errors,
    choices,
    query: filterQuery(boardFilter),
    ranked: hotSpots.filter((h) => h.failures > 0).slice(0, 5),
    thisVersion: { id: version.id, number: version.number },
  };
}

export default function InsightsMapRoute({ loaderData }: Route.ComponentProps) {
  const { title, nodes, edges, filter, errors, choices, query, ranked, thisVersion } = loaderData;
  return (
    <>
      <PageHeader
        title={title}
        subtitle="The published map, read-only, each node shaded by how often runs ended there."
        actions={
          <Link className="btn px-3 py-1" to={`/insights?${query}`}>
            Back to hot spots
          </Link>
        }
      />
      <InsightsFilterForm filter={filter} errors={errors} choices={choices} thisVersion={thisVersion} />
      <HeatMap nodes={nodes} edges={edges as Edge[]} title={`${title}, shaded by failure rate`} />
      {ranked.length ? (
        <section className="card mt-4" aria-labelledby="top-title">
          <h2 id="top-title" className="mb-2 font-semibold">
            Highest by lower bound
          </h2>
          <ol className="list-decimal pl-5 text-sm">
            {ranked.map((h) => (
              <li key={h.nodeId}>
                {h.nodeKind === "part" ? `${h.refdes ?? ""} ${h.nodeName}` : `Short on ${h.nodeName}`}:{" "}
                <span className="tabular-nums">
                  {h.failures}/{h.runs} ({(h.rate * 100).toFixed(1)} %, 95 % interval{" "}
                  {(h.low * 100).toFixed(1)}–{(h.high * 100).toFixed(1)} %)
                </span>
              </li>
            ))}
          </ol>
        </section>
      ) : null}
    </>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [
  { title: `${data?.title ?? "Map"} · Insights · Railwise` },
];
