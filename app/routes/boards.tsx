import { and, asc, count, eq, isNull } from "drizzle-orm";
import { Link } from "react-router";
import { EmptyState, PageHeader } from "~/components/page-header";
import { fullChargeVolts } from "~/lib/battery";
import { requireMember } from "~/server/auth.server";
import { db } from "~/server/db.server";
import { boards, maps } from "~/server/schema.server";
import type { Route } from "./+types/boards";

export async function loader({ request }: Route.LoaderArgs) {
  const { shop } = await requireMember(request, { permission: "view:maps" });
  const rows = await db
    .select({
      id: boards.id,
      maker: boards.maker,
      model: boards.model,
      boardNumber: boards.boardNumber,
      revision: boards.revision,
      inputType: boards.inputType,
      inputMillivolts: boards.inputMillivolts,
      batteryCells: boards.batteryCells,
      mapCount: count(maps.id),
    })
    .from(boards)
    .leftJoin(maps, eq(maps.boardId, boards.id))
    .where(and(eq(boards.shopId, shop.id), isNull(boards.archivedAt)))
    .groupBy(boards.id)
    .orderBy(asc(boards.maker), asc(boards.model), asc(boards.boardNumber))
    .all();
  return { boards: rows };
}

const INPUT_LABEL = { "usb-c-pd": "USB-C PD", barrel: "Barrel jack", other: "Other" } as const;

export default function BoardsRoute({ loaderData }: Route.ComponentProps) {
  const { boards } = loaderData;
  return (
    <>
      <PageHeader title="Boards" subtitle="Board models your shop repairs, each with its power-up maps." />
      {boards.length === 0 ? (
        <EmptyState title="No boards yet">
          A lead or owner adds the first board model your shop repairs.
        </EmptyState>
      ) : (
        <div className="overflow-x-auto rounded-lg border border-line bg-panel">
          <table className="w-full text-left text-sm">
            <thead className="bg-sunken text-muted">
              <tr>
                <th className="px-4 py-2 font-medium">Board</th>
                <th className="px-4 py-2 font-medium">Board number</th>
                <th className="px-4 py-2 font-medium">Input</th>
                <th className="px-4 py-2 font-medium">Battery</th>
                <th className="px-4 py-2 font-medium">Maps</th>
              </tr>
            </thead>
            <tbody>
              {boards.map((b) => (
                <tr key={b.id} className="border-t border-line">
                  <td className="px-4 py-3">
                    <Link className="link font-medium" to={`/boards/${b.id}`}>
                      {b.maker} {b.model}
                    </Link>
                  </td>
                  <td className="px-4 py-3 font-mono">
                    {b.boardNumber}
                    {b.revision ? ` rev ${b.revision}` : ""}
                  </td>
                  <td className="px-4 py-3">
                    {INPUT_LABEL[b.inputType]} {(b.inputMillivolts / 1000).toFixed(0)} V
                  </td>
                  <td className="px-4 py-3">
                    {b.batteryCells
                      ? `${b.batteryCells} cells · ${fullChargeVolts(b.batteryCells)?.toFixed(1)} V full`
                      : "none"}
                  </td>
                  <td className="px-4 py-3">{b.mapCount}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Boards · Railwise" }];
