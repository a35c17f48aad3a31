import "@fontsource/ibm-plex-sans/400.css";
import "@fontsource/ibm-plex-sans/500.css";
import "@fontsource/ibm-plex-sans/600.css";
import "@fontsource/ibm-plex-mono/400.css";
import "./styles/app.css";
import {
  type ShouldRevalidateFunctionArgs,
  data,
  isRouteErrorResponse,
  Links,
  Meta,
  Outlet,
  Scripts,
  ScrollRestoration,
  useRouteLoaderData,
} from "react-router";
import { isRunOnlyRevalidation } from "./components/run-revalidation";
import type { Route } from "./+types/root";
import { Logo } from "./components/logo";
import { useNonce } from "./components/nonce";
import { ToastHost } from "./components/toast-host";
import { readTheme } from "./lib/theme";
import { getToast } from "./server/toast.server";

export function shouldRevalidate(args: ShouldRevalidateFunctionArgs) {
  if (isRunOnlyRevalidation()) return false;
  return args.defaultShouldRevalidate;
}

export async function loader({ request }: Route.LoaderArgs) {
  const { toast, headers } = await getToast(request);
  return data({ theme: readTheme(request.headers.get("Cookie")), toast }, { headers });
}

// Error pages rendered here (an unknown address, a refused request) still need a document title; a page's
// own meta replaces this one.
export const meta: Route.MetaFunction = ({ error }) => [
  {
    title: isRouteErrorResponse(error)
      ? `${error.status === 404 ? "Page not found" : error.status === 403 ? "Not allowed" : `Error ${error.status}`} · Railwise`
      : error
        ? "Something went wrong · Railwise"
        : "Railwise",
  },
];

export const links: Route.LinksFunction = () => [
  { rel: "icon", href: "/favicon.svg", type: "image/svg+xml" },
];

export function Layout({ children }: { children: React.ReactNode }) {
  const root = useRouteLoaderData<typeof loader>("root");
  const nonce = useNonce();
  return (
    <html lang="en" data-theme={root?.theme ?? "system"}>
      <head>
        <meta charSet="utf-8" />
        <meta name="viewport" content="width=device-width, initial-scale=1" />
        <Meta />
        <Links />
      </head>
      <body className="min-h-screen bg-paper text-ink antialiased">
        {children}
        <ScrollRestoration nonce={nonce} />
        <Scripts nonce={nonce} />
      </body>
    </html>
  );
}

export default function App({ loaderData }: Route.ComponentProps) {
  return (
    <>
      <Outlet />
      <ToastHost toast={loaderData.toast} />
    </>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  let title = "Something went wrong";
  let detail = "An unexpected error stopped this page. Your saved work is safe; try again in a moment.";
  if (isRouteErrorResponse(error)) {
    title =
      error.status === 404
        ? "Page not found"
        : error.status === 403
          ? "Not allowed"
          : `Error ${error.status}`;
    detail =
      typeof error.data === "string" && error.data
        ? error.data
        : error.status === 404
          ? "There is nothing at this address."
          : error.statusText;
  } else if (import.meta.env.DEV && error instanceof Error) {
    detail = error.message;
  }
  return (
    <main className="mx-auto flex max-w-xl flex-col items-start gap-4 p-10">
      <Logo className="h-8" />
      <h1 className="text-2xl font-semibold">{title}</h1>
      <p className="text-muted">{detail}</p>
      <a className="link" href="/">
        Back to Railwise
      </a>
    </main>
  );
}
