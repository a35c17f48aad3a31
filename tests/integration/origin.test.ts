import { describe, expect, it } from "vitest";
import * as theme from "~/routes/theme";
import { call } from "../support/requests";

const post = (headers: Record<string, string>) =>
  new Request("http://railwise.test/theme", {
    method: "POST",
    body: new URLSearchParams({ theme: "dark" }),
    headers: { "Content-Type": "application/x-www-form-urlencoded", ...headers },
  });

describe("resource-route origin check", () => {
  it("accepts same-origin posts and refuses cross-site ones", async () => {
    expect((await call(theme.action, { request: post({ Origin: "http://railwise.test" }) })).status).toBe(
      200,
    );
    expect((await call(theme.action, { request: post({ "Sec-Fetch-Site": "same-origin" }) })).status).toBe(
      200,
    );
    expect((await call(theme.action, { request: post({ Origin: "http://evil.example" }) })).status).toBe(403);
    expect((await call(theme.action, { request: post({ "Sec-Fetch-Site": "cross-site" }) })).status).toBe(
      403,
    );
    expect((await call(theme.action, { request: post({ Origin: "null" }) })).status).toBe(403);
    expect((await call(theme.action, { request: post({ Origin: "http://[not a host" }) })).status).toBe(403);
  });
});
