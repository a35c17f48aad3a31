import { mapToJson } from "~/lib/engine";
import { requireMember } from "~/server/auth.server";
import { draftDocument, getMapForShop, getVersion } from "~/server/maps.server";
import type { Route } from "./+types/map-export";
import { withResourceHeaders } from "~/server/security-headers.server";

/** Download of a published version (?version=N) or the draft, as our map JSON document. */
export const loader = withResourceHeaders(async function loader({ request, params }: Route.LoaderArgs) {
  const { shop } = await requireMember(request, { permission: "view:maps" });
  const map = await getMapForShop(shop.id, params.mapId);
  const wanted = new URL(request.url).searchParams.get("version");
  let doc = draftDocument(map.draft);
  let label = "draft";
  if (wanted) {
    const number = Number(wanted);
    if (!Number.isInteger(number) || number < 1)
      throw new Response("Ask for a version number such as 1.", { status: 400 });
    doc = (await getVersion(shop.id, map.id, number)).document;
    label = `v${number}`;
  }
  const json = mapToJson(doc);
  if (!json.ok) throw new Response(json.error.message, { status: 500 });
  const slug =
    map.name
      .toLowerCase()
      .replace(/[^a-z0-9]+/g, "-")
      .replace(/^-|-$/g, "") || "map";
  return new Response(json.value, {
    headers: {
      "Content-Type": "application/json; charset=utf-8",
      "Content-Disposition": `attachment; filename="${slug}-${label}.railwise-map.json"`,
      "X-Content-Type-Options": "nosniff",
      "Cache-Control": "private, no-store",
    },
  });
});
