import { and, desc, eq } from "drizzle-orm";
import { Link } from "react-router";
import { PageHeader } from "~/components/page-header";
import { fullChargeVolts } from "~/lib/battery";
import { notFound, requireMember } from "~/server/auth.server";
import { db } from "~/server/db.server";
import { boards, maps, mapVersions } from "~/server/schema.server";
import type { Route } from "./+types/board";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { shop } = await requireMember(request, { permission: "view:maps" });
  const board = await db
    .select()
    .from(boards)
    .where(and(eq(boards.id, params.boardId), eq(boards.shopId, shop.id)))
    .get();
  if (!board) notFound("That board");
  const boardMaps = await db
    .select({ id: maps.id, name: maps.name, draftRevision: maps.draftRevision })
    .from(maps)
    .where(and(eq(maps.boardId, board.id), eq(maps.shopId, shop.id)))
    .all();
  const versions = await db
    .select({
      id: mapVersions.id,
      mapId: mapVersions.mapId,
      number: mapVersions.number,
      note: mapVersions.note,
      publishedAt: mapVersions.publishedAt,
    })
    .from(mapVersions)
    .innerJoin(maps, eq(maps.id, mapVersions.mapId))
    .where(and(eq(maps.boardId, board.id), eq(mapVersions.shopId, shop.id)))
    .orderBy(desc(mapVersions.number))
    .all();
  return { board, maps: boardMaps, versions };
}

export default function BoardRoute({ loaderData }: Route.ComponentProps) {
  const { board, maps, versions } = loaderData;
  const full = fullChargeVolts(board.batteryCells);
  return (
    <>
      <p className="mb-2 text-sm">
        <Link className="link" to="/boards">
          Boards
        </Link>
      </p>
      <PageHeader
        title={`${board.maker} ${board.model}`}
        subtitle={`Board ${board.boardNumber}${board.revision ? ` rev ${board.revision}` : ""}`}
      />
      <dl className="card mb-6 grid grid-cols-2 gap-4 text-sm md:grid-cols-4">
        <div>
          <dt className="text-muted">Input</dt>
          <dd>
            {board.inputType === "usb-c-pd"
              ? "USB-C PD"
              : board.inputType === "barrel"
                ? "Barrel jack"
                : "Other"}{" "}
            {(board.inputMillivolts / 1000).toFixed(0)} V
          </dd>
        </div>
        <div>
          <dt className="text-muted">Battery</dt>
          <dd>{board.batteryCells ? `${board.batteryCells} cells in series` : "none"}</dd>
        </div>
        <div>
          <dt className="text-muted">Full charge</dt>
          <dd>{full ? `${full.toFixed(1)} V (4.2 V per cell)` : "—"}</dd>
        </div>
      </dl>
      <section className="card">
        <h2 className="mb-3 font-semibold">Maps</h2>
        {maps.length === 0 ? <p className="text-sm text-muted">No map for this board yet.</p> : null}
        <ul className="flex flex-col gap-2 text-sm">
          {maps.map((m) => {
            const mv = versions.filter((v) => v.mapId === m.id);
            return (
              <li key={m.id}>
                <span className="font-medium">{m.name}</span>{" "}
                <span className="text-muted">
                  {mv.length ? `published v${mv[0].number}` : "draft only"} · draft revision {m.draftRevision}
                </span>
              </li>
            );
          })}
        </ul>
      </section>
    </>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [
  { title: data ? `${data.board.maker} ${data.board.model} · Railwise` : "Board · Railwise" },
];
