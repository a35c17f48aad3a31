import { db } from "./db.server";
import { auditEvents } from "./schema.server";

export function audit(entry: {
  shopId: string | null;
  actorId: string | null;
  action: string;
  subject?: string;
  data?: Record<string, unknown>;
}) {
  return db.insert(auditEvents).values(entry);
}
