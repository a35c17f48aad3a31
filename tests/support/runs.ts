import { OM_5150_MAP } from "../../seed/maps/om-5150";
import { db } from "~/server/db.server";
import { newId } from "~/server/ids.server";
import { maps, mapVersions } from "~/server/schema.server";
import * as runRoute from "~/routes/run";
import * as runsNew from "~/routes/runs-new";
import { call, formRequest, getRequest } from "./requests";

/** Publishes the demo OM-5150 map as version 1 for a fixture board. */
export async function publishDemoMap(shopId: string, boardId: string, document = OM_5150_MAP) {
  const mapId = newId();
  const versionId = newId();
  await db
    .insert(maps)
    .values({ id: mapId, shopId, boardId, name: "Fixture power-up", draft: document, draftRevision: 1 });
  await db.insert(mapVersions).values({ id: versionId, shopId, mapId, number: 1, document, note: "fixture" });
  return { mapId, versionId };
}

export async function startRun(
  cookie: string,
  fields: {
    boardId: string;
    mapVersionId: string;
    condition?: string;
    strategy?: string;
    pressButton?: boolean;
  },
) {
  const res = await call(runsNew.action, {
    request: formRequest(
      "/runs/new",
      {
        boardId: fields.boardId,
        mapVersionId: fields.mapVersionId,
        condition: fields.condition ?? "both",
        ...(fields.strategy ? { strategy: fields.strategy } : {}),
        ...(fields.pressButton === false ? {} : { pressButton: "on" }),
      },
      cookie,
    ),
  });
  if (res.status !== 302) throw new Error(`run not started: ${res.status} ${JSON.stringify(res.data)}`);
  return res.response!.headers.get("Location")!.split("/").pop()!;
}

export async function loadRun(cookie: string, runId: string) {
  const res = await call(runRoute.loader, {
    request: getRequest(`/runs/${runId}`, cookie),
    params: { runId },
  });
  return res;
}

// biome-ignore lint/suspicious/noExplicitAny: loader data is checked field by field in the tests
export type Loaded = any;

export function postRun(cookie: string, runId: string, fields: Record<string, string>) {
  return call(runRoute.action, { request: formRequest(`/runs/${runId}`, fields, cookie), params: { runId } });
}

let n = 0;
export const readingId = () => `test-reading-${Date.now().toString(36)}-${(n++).toString(36)}`;
