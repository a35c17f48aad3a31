import { Link } from "react-router";
import { PageHeader } from "~/components/page-header";
import type { MapNode } from "~/lib/engine";
import { compareDocuments } from "~/lib/map-changes";
import { requireMember } from "~/server/auth.server";
import { draftDocument, getMapForShop, getVersion } from "~/server/maps.server";
import type { Route } from "./+types/map-compare";

async function side(shopId: string, mapId: string, draft: unknown, value: string | null) {
  if (!value || value === "draft") return { label: "current draft", number: null, doc: draftDocument(draft) };
  const number = Number(value);
  if (!Number.isInteger(number) || number < 1)
    throw new Response("Pick a version number or the draft.", { status: 400 });
  const v = await getVersion(shopId, mapId, number);
  return { label: `version ${v.number}`, number: v.number, doc: v.document };
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const { shop } = await requireMember(request, { permission: "view:maps" });
  const map = await getMapForShop(shop.id, params.mapId);
  const url = new URL(request.url);
  const a = await side(shop.id, map.id, map.draft, url.searchParams.get("a") ?? "1");
  const b = await side(shop.id, map.id, map.draft, url.searchParams.get("b"));
  const diff = compareDocuments(a.doc, b.doc);
  const brief = (n: MapNode) => ({
    id: n.id,
    kind: n.kind,
    name: n.kind === "part" && n.refdes ? `${n.refdes} · ${n.name}` : n.name,
  });
  return {
    map: { id: map.id, name: map.name },
    a: a.label,
    b: b.label,
    // Each side opens on the canvas: a version read-only (where its picture can be exported), the draft to edit.
    sides: [...new Map([a, b].map((x) => [x.label, { label: x.label, number: x.number }])).values()],
    added: diff.added.map(brief),
    removed: diff.removed.map(brief),
    changed: diff.changed.map((c) => ({ ...brief(c.after), fields: c.fields })),
    edgesAdded: diff.edgesAdded.length,
    edgesRemoved: diff.edgesRemoved.length,
    settingsChanged: diff.settingsChanged,
  };
}

export default function MapCompareRoute({ loaderData: d }: Route.ComponentProps) {
  const none =
    !d.added.length &&
    !d.removed.length &&
    !d.changed.length &&
    !d.edgesAdded &&
    !d.edgesRemoved &&
    !d.settingsChanged;
  return (
    <>
      <p className="mb-2 text-sm">
        <Link className="link" to={`/maps/${d.map.id}`}>
          Back to {d.map.name}
        </Link>
      </p>
      <PageHeader title={`Compare ${d.a} with ${d.b}`} subtitle={d.map.name} />
      <p className="mb-4 flex flex-wrap gap-3 text-sm">
        {d.sides.map((side) => (
          <Link
            key={side.label}
            className="link"
            to={side.number === null ? `/maps/${d.map.id}` : `/maps/${d.map.id}?version=${side.number}`}
          >
            Open {side.label}
            {side.number === null ? "" : " (read only, with PNG and SVG export)"}
          </Link>
        ))}
      </p>
      {none ? <p className="card">No differences (positions on the canvas are not compared).</p> : null}
      <div className="grid gap-4 md:grid-cols-3">
        <List
          title={`Added (${d.added.length})`}
          tone="text-ok"
          items={d.added.map((n) => ({ key: n.id, text: `${n.kind}: ${n.name}` }))}
        />
        <List
          title={`Removed (${d.removed.length})`}
          tone="text-bad"
          items={d.removed.map((n) => ({ key: n.id, text: `${n.kind}: ${n.name}` }))}
        />
        <List
          title={`Changed (${d.changed.length})`}
          tone="text-warn"
          items={d.changed.map((n) => ({ key: n.id, text: `${n.kind}: ${n.name} — ${n.fields.join(", ")}` }))}
        />
      </div>
      <p className="mt-4 text-sm text-muted">
        Links added: {d.edgesAdded} · links removed: {d.edgesRemoved} · map settings{" "}
        {d.settingsChanged ? "changed" : "unchanged"}
      </p>
    </>
  );
}

function List({
  title,
  tone,
  items,
}: {
  title: string;
  tone: string;
  items: Array<{ key: string; text: string }>;
}) {
  return (
    <section className="card" aria-label={title}>
      <h2 className={`mb-2 font-semibold ${tone}`}>{title}</h2>
      {items.length ? (
        <ul className="flex flex-col gap-1 text-sm">
          {items.map((i) => (
            <li key={i.key}>{i.text}</li>
          ))}
        </ul>
      ) : (
        <p className="text-sm text-muted">None.</p>
      )}
    </section>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Compare map versions · Railwise" }];
