import { describe, expect, it, vi } from "vitest";

// The per-address limit, lowered before the environment is first read (as end-to-end runs set their own):
// failures against many accounts from one address are throttled, while the per-account limit stays untouched.
vi.hoisted(() => {
  process.env.SIGNIN_MAX_PER_ADDRESS = "3";
  process.env.SIGNIN_MAX_PER_ACCOUNT = "10";
  process.env.SIGNIN_WINDOW_MINUTES = "15";
});

import { action } from "~/routes/login";
import { signInWaitMs } from "~/server/throttle.server";
import { createShopWithRoles, FIXTURE_PASSWORD } from "../support/fixtures";
import { call, formRequest } from "../support/requests";

// RFC 5737 documentation addresses.
const SPRAYER = "203.0.113.7";
const NEIGHBOUR = "198.51.100.9";

const signIn = (email: string, password: string, address: string) =>
  call(action, {
    request: formRequest("/login", { email, password }),
    context: { clientAddress: address },
  });

const formError = (r: Awaited<ReturnType<typeof signIn>>) =>
  (r.data as { result: { error: Record<string, string[]> } }).result.error[""][0];

describe("sign-in throttle per address", () => {
  it("refuses an address after SIGNIN_MAX_PER_ADDRESS failures across accounts, with the wait, and lets other addresses in", async () => {
    const shop = await createShopWithRoles();
    const victim = `tech-${shop.shopId}@fixture.test`;
    // Three different accounts, one wrong guess each: no account is near its own limit of 10.
    for (const who of [
      "nobody-1@fixture.test",
      "nobody-2@fixture.test",
      `lead-${shop.shopId}@fixture.test`,
    ]) {
      const r = await signIn(who, "password spraying guess", SPRAYER);
      expect(r.status).toBe(400);
      expect(formError(r)).toBe("That e-mail and password do not match an account.");
    }
    // The fourth attempt from that address is refused before the password is even checked, right or wrong.
    const blocked = await signIn(victim, FIXTURE_PASSWORD, SPRAYER);
    expect(blocked.status).toBe(429);
    expect(formError(blocked)).toMatch(/^Too many failed sign-ins\. Wait 15 minutes and try again\.$/);
    expect(blocked.response?.headers.get("Set-Cookie") ?? null).toBeNull();

    // Not a lock-out of the accounts: the same member signs in from another address.
    const elsewhere = await signIn(victim, FIXTURE_PASSWORD, NEIGHBOUR);
    expect(elsewhere.status).toBe(302);
    expect(elsewhere.response!.headers.get("Set-Cookie")).toMatch(/^rw_session=/);
    // The lead's one failure did not throttle the lead from a clean address either.
    expect((await signIn(`lead-${shop.shopId}@fixture.test`, FIXTURE_PASSWORD, NEIGHBOUR)).status).toBe(302);
  });

  it("lifts the address limit once the window has passed", async () => {
    const now = Date.now();
    expect(await signInWaitMs("anyone@fixture.test", SPRAYER, now)).toBeGreaterThan(14 * 60_000);
    expect(await signInWaitMs("anyone@fixture.test", SPRAYER, now + 15 * 60_000 + 1000)).toBe(0);
  });
});
