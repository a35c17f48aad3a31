import { useEffect, useState } from "react";
import { Form, NavLink, Outlet, type ShouldRevalidateFunctionArgs, useNavigation } from "react-router";
import { LogoMark } from "~/components/logo";
import { can, type Permission, ROLE_LABELS } from "~/lib/permissions";
import { listMemberships, requireMember } from "~/server/auth.server";
import { countUnreadNotices } from "~/server/runs.server";
import { readTheme, themeCookie } from "~/lib/theme";
import { isRunOnlyRevalidation } from "~/components/run-revalidation";
import type { Route } from "./+types/app-layout";

export function shouldRevalidate(args: ShouldRevalidateFunctionArgs) {
  if (isRunOnlyRevalidation()) return false;
  return args.defaultShouldRevalidate;
}

export async function loader({ request }: Route.LoaderArgs) {
  const { user, shop, role } = await requireMember(request);
  const [memberships, unreadNotices] = await Promise.all([
    listMemberships(user.id),
    countUnreadNotices(shop.id, user.id),
  ]);
  return {
    user: { id: user.id, name: user.name, email: user.email },
    shop: { id: shop.id, name: shop.name },
    role,
    memberships: memberships.map((m) => ({ shopId: m.shopId, shopName: m.shopName, role: m.role })),
    theme: readTheme(request.headers.get("Cookie")),
    unreadNotices,
  };
}

const NAV: Array<{ to: string; label: string; permission: Permission }> = [
  { to: "/boards", label: "Boards", permission: "view:maps" },
  { to: "/runs", label: "Runs", permission: "view:runs" },
  { to: "/jobs", label: "Jobs", permission: "view:jobs" },
  { to: "/insights", label: "Insights", permission: "view:insights" },
  { to: "/settings", label: "Shop settings", permission: "manage:shop" },
  { to: "/settings/tokens", label: "API tokens", permission: "manage:own-tokens" },
];

export default function AppLayoutRoute({ loaderData }: Route.ComponentProps) {
  const { user, shop, role, memberships, theme, unreadNotices } = loaderData;
  const navigation = useNavigation();
  const busy = navigation.state !== "idle";
  return (
    <div className="flex min-h-screen flex-col">
      <div
        aria-hidden="true"
        className={`no-print fixed top-0 left-0 z-50 h-0.5 bg-accent transition-all duration-500 ${busy ? "w-2/3 opacity-100" : "w-full opacity-0"}`}
      />
      <header className="no-print border-b border-line bg-panel">
        <div className="mx-auto flex max-w-7xl flex-wrap items-center gap-x-6 gap-y-2 px-4 py-2">
          <NavLink to="/boards" className="flex items-center gap-2" aria-label="Railwise, boards">
            <LogoMark className="h-7 w-7" />
            <span className="font-semibold tracking-tight">Railwise</span>
          </NavLink>
          <nav aria-label="Main" className="flex flex-wrap gap-1">
            {NAV.filter((n) => can(role, n.permission)).map((n) => (
              <NavLink
                key={n.to}
                to={n.to}
                className={({ isActive, isPending }) =>
                  `rounded-md px-3 py-2 text-sm font-medium ${isActive ? "bg-accent-soft text-accent" : "text-ink hover:bg-sunken"} ${isPending ? "opacity-70" : ""}`
                }
              >
                {n.label}
                {n.to === "/runs" && unreadNotices ? (
                  <span
                    className="ml-1.5 rounded-full bg-accent px-1.5 text-xs text-on-accent"
                    data-testid="notice-badge"
                  >
                    {unreadNotices}
                    <span className="sr-only"> new notices</span>
                  </span>
                ) : null}
              </NavLink>
            ))}
          </nav>
          <div className="ml-auto flex items-center gap-3 text-sm">
            <ShopSwitcher current={shop} memberships={memberships} />
            <span className="hidden text-muted md:inline" title={user.email}>
              {user.name} · {ROLE_LABELS[role]}
            </span>
            <ThemeToggle theme={theme} />
            <Form method="post" action="/logout">
              <button type="submit" className="btn px-3 py-1">
                Sign out
              </button>
            </Form>
            {/* Ends this member's sessions on every device, e.g. after a lost tablet or a shared bench PC. */}
            <Form method="post" action="/logout">
              <input type="hidden" name="everywhere" value="1" />
              <button
                type="submit"
                className="link text-xs"
                title="Ends your sessions in every browser and on every device"
              >
                Sign out everywhere
              </button>
            </Form>
          </div>
        </div>
      </header>
      <main className="mx-auto w-full max-w-7xl flex-1 px-4 py-6">
        <Outlet />
      </main>
    </div>
  );
}

function ShopSwitcher({
  current,
  memberships,
}: {
  current: { id: string; name: string };
  memberships: Array<{ shopId: string; shopName: string }>;
}) {
  if (memberships.length < 2) return <span className="font-medium">{current.name}</span>;
  return (
    <Form method="post" action="/switch-shop" className="flex items-center gap-1">
      <label htmlFor="shop-switch" className="sr-only">
        Shop
      </label>
      <select
        id="shop-switch"
        name="shopId"
        defaultValue={current.id}
        className="field-input py-1"
        onChange={(e) => e.currentTarget.form?.requestSubmit()}
      >
        {memberships.map((m) => (
          <option key={m.shopId} value={m.shopId}>
            {m.shopName}
          </option>
        ))}
      </select>
      <noscript>
        <button type="submit" className="btn">
          Switch
        </button>
      </noscript>
    </Form>
  );
}

const NEXT_THEME = { system: "light", light: "dark", dark: "system" } as const;
const THEME_LABEL = { system: "Theme: follows system", light: "Theme: light", dark: "Theme: dark" } as const;

function ThemeToggle({ theme }: { theme: keyof typeof NEXT_THEME }) {
  // The choice is a display preference kept in a cookie: with JavaScript it is applied and stored right here,
  // with no request, so two quick clicks can never have their answers land out of order. Without JavaScript
  // the form posts to /theme, which sets the same cookie.
  const [shown, setShown] = useState(theme);
  useEffect(() => setShown(theme), [theme]);
  return (
    <form
      method="post"
      action="/theme"
      onSubmit={(e) => {
        e.preventDefault();
        const next = NEXT_THEME[shown];
        document.documentElement.dataset.theme = next;
        // biome-ignore lint/suspicious/noDocumentCookie: a plain display preference cookie, same string the server sets.
        document.cookie = themeCookie(next);
        setShown(next);
      }}
    >
      <input type="hidden" name="theme" value={NEXT_THEME[shown]} />
      <button
        type="submit"
        className="btn px-3 py-1"
        title={THEME_LABEL[shown]}
        aria-label={`${THEME_LABEL[shown]}. Switch to ${NEXT_THEME[shown]}.`}
      >
        {shown === "dark" ? "☾" : shown === "light" ? "☀" : "◐"}
      </button>
    </form>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  const status = (error as { status?: number })?.status;
  const message =
    typeof (error as { data?: unknown })?.data === "string" ? (error as { data: string }).data : null;
  const heading = status === 403 ? "Not allowed" : status === 404 ? "Not found" : "Something went wrong";
  return (
    <main className="mx-auto max-w-xl p-10">
      {/* The route's own meta is not rendered for an error, so the page names itself (React hoists <title>). */}
      <title>{`${heading} · Railwise`}</title>
      <h1 className="text-2xl font-semibold">{heading}</h1>
      <p className="mt-2 text-muted">{message ?? "This page could not be shown."}</p>
      <a className="link mt-4 inline-block" href="/boards">
        Back to boards
      </a>
    </main>
  );
}
