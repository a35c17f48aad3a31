import { parseWithZod } from "@conform-to/zod/v4";
import { and, asc, count, eq, isNotNull, isNull, like, or, type SQL } from "drizzle-orm";
import { data, Form, Link } from "react-router";
import { BoardFormFields } from "~/components/board-form";
import { EmptyState, PageHeader } from "~/components/page-header";
import { useMember } from "~/components/use-member";
import { fullChargeVolts } from "~/lib/battery";
import { BoardFilterSchema, BoardFormSchema, INPUT_LABEL } from "~/lib/board-schemas";
import { audit } from "~/server/audit.server";
import { requireMember } from "~/server/auth.server";
import { db } from "~/server/db.server";
import { newId } from "~/server/ids.server";
import { boards, maps } from "~/server/schema.server";
import { redirectWithToast } from "~/server/toast.server";
import type { Route } from "./+types/boards";

const escapeLike = (s: string) => s.replace(/[\\%_]/g, (c) => `\\${c}`);
const contains = (column: Parameters<typeof like>[0], s: string) => like(column, `%${escapeLike(s)}%`);

export async function loader({ request }: Route.LoaderArgs) {
  const { shop } = await requireMember(request, { permission: "view:maps" });
  const filters = BoardFilterSchema.parse(Object.fromEntries(new URL(request.url).searchParams));
  const where: SQL[] = [eq(boards.shopId, shop.id)];
  where.push(filters.archived === "1" ? isNotNull(boards.archivedAt) : isNull(boards.archivedAt));
  if (filters.q) {
    const q = filters.q;
    where.push(
      or(
        contains(boards.maker, q),
        contains(boards.model, q),
        contains(boards.boardNumber, q),
        contains(boards.revision, q),
        contains(boards.notes, q),
      )!,
    );
  }
  if (filters.maker) where.push(eq(boards.maker, filters.maker));
  if (filters.model) where.push(contains(boards.model, filters.model));
  if (filters.boardNumber) where.push(contains(boards.boardNumber, filters.boardNumber));
  if (filters.revision) where.push(eq(boards.revision, filters.revision));
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
      archivedAt: boards.archivedAt,
      mapCount: count(maps.id),
    })
    .from(boards)
    .leftJoin(maps, and(eq(maps.boardId, boards.id), eq(maps.shopId, shop.id)))
    .where(and(...where))
    .groupBy(boards.id)
    .orderBy(asc(boards.maker), asc(boards.model), asc(boards.boardNumber))
    .all();
  const makers = await db
    .selectDistinct({ maker: boards.maker })
    .from(boards)
    .where(eq(boards.shopId, shop.id))
    .orderBy(asc(boards.maker))
    .all();
  return { boards: rows, filters, makers: makers.map((m) => m.maker) };
}

export async function action({ request }: Route.ActionArgs) {
  const { shop, user } = await requireMember(request, { permission: "edit:boards" });
  const formData = await request.formData();
  const submission = parseWithZod(formData, { schema: BoardFormSchema });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  const v = submission.value;
  const id = newId();
  await db.insert(boards).values({
    id,
    shopId: shop.id,
    maker: v.maker,
    model: v.model,
    boardNumber: v.boardNumber,
    revision: v.revision,
    inputType: v.inputType,
    inputMillivolts: v.inputVolts,
    batteryCells: v.batteryCells,
    notes: v.notes,
  });
  await audit({ shopId: shop.id, actorId: user.id, action: "board.created", subject: id });
  return redirectWithToast(`/boards/${id}`, {
    kind: "success",
    message: `Added ${v.maker} ${v.model} (${v.boardNumber}).`,
  });
}

export default function BoardsRoute({ loaderData, actionData }: Route.ComponentProps) {
  const { boards, filters, makers } = loaderData;
  const { can } = useMember();
  const filtered = !!(filters.q || filters.maker || filters.model || filters.boardNumber || filters.revision);
  return (
    <>
      <PageHeader
        title="Boards"
        subtitle="Board models your shop repairs, each with its power-up maps."
        actions={
          can("edit:meters") ? (
            <Link to="/settings/meters" className="btn">
              Meter profiles
            </Link>
          ) : undefined
        }
      />
      <Form method="get" className="card mb-4 grid gap-3 p-4 sm:grid-cols-3 lg:grid-cols-6" role="search">
        <label className="flex flex-col gap-1 text-sm lg:col-span-2">
          <span className="font-medium">Search</span>
          <input
            name="q"
            type="search"
            defaultValue={filters.q ?? ""}
            className="field-input"
            placeholder="maker, model, number, notes"
          />
        </label>
        <label className="flex flex-col gap-1 text-sm">
          <span className="font-medium">Maker</span>
          <select name="maker" defaultValue={filters.maker ?? ""} className="field-input">
            <option value="">Any maker</option>
            {makers.map((m) => (
              <option key={m} value={m}>
                {m}
              </option>
            ))}
          </select>
        </label>
        <label className="flex flex-col gap-1 text-sm">
          <span className="font-medium">Model</span>
          <input name="model" defaultValue={filters.model ?? ""} className="field-input" />
        </label>
        <label className="flex flex-col gap-1 text-sm">
          <span className="font-medium">Board number</span>
          <input
            name="boardNumber"
            defaultValue={filters.boardNumber ?? ""}
            className="field-input font-mono"
          />
        </label>
        <label className="flex flex-col gap-1 text-sm">
          <span className="font-medium">Revision</span>
          <input name="revision" defaultValue={filters.revision ?? ""} className="field-input font-mono" />
        </label>
        <div className="flex flex-wrap items-center gap-3 sm:col-span-3 lg:col-span-6">
          <label className="flex items-center gap-2 text-sm">
            <input type="checkbox" name="archived" value="1" defaultChecked={filters.archived === "1"} />
            Show archived boards instead
          </label>
          <button type="submit" className="btn">
            Apply
          </button>
          {filtered || filters.archived ? (
            <Link to="/boards" className="link text-sm">
              Clear filters
            </Link>
          ) : null}
        </div>
      </Form>
      {boards.length === 0 ? (
        <EmptyState
          title={filtered ? "No board matches" : filters.archived ? "No archived boards" : "No boards yet"}
        >
          {filtered ? "Try fewer filters." : "A lead or owner adds the first board model your shop repairs."}
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
                    {b.archivedAt ? <span className="ml-2 text-xs text-muted">archived</span> : null}
                  </td>
                  <td className="px-4 py-3 font-mono">
                    {b.boardNumber}
                    {b.revision ? ` rev ${b.revision}` : ""}
                  </td>
                  <td className="px-4 py-3">
                    {INPUT_LABEL[b.inputType]} {Number((b.inputMillivolts / 1000).toFixed(2))} V
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
      {can("edit:boards") ? (
        <details className="card mt-6" open={!!actionData?.result}>
          <summary className="cursor-pointer font-semibold">Add a board</summary>
          <div className="mt-4">
            <BoardFormFields
              id="board-new"
              intent="create"
              lastResult={actionData?.result}
              submitLabel="Add board"
            />
          </div>
        </details>
      ) : null}
    </>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Boards · Railwise" }];
