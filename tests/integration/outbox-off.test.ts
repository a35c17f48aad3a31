import { describe, expect, it } from "vitest";
import { call, getRequest } from "../support/requests";

// With capture off the captured-mail page must not exist at all.
process.env.MAIL_CAPTURE = "0";
process.env.SMTP_URL = "smtp://127.0.0.1:1";

describe("/dev/outbox", () => {
  it("answers 404 when mail capture is off", async () => {
    const outbox = await import("~/routes/dev-outbox");
    const res = await call(outbox.loader, { request: getRequest("/dev/outbox") });
    expect(res.status).toBe(404);
  });

  it("answers 404 for the JSON list too", async () => {
    const outbox = await import("~/routes/dev-outbox-json");
    const res = await call(outbox.loader, { request: getRequest("/dev/outbox.json") });
    expect(res.status).toBe(404);
  });
});
