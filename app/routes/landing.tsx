import { Link, redirect } from "react-router";
import { Logo } from "~/components/logo";
import { getSession } from "~/server/session.server";
import type { Route } from "./+types/landing";

export async function loader({ request }: Route.LoaderArgs) {
  if (await getSession(request)) throw redirect("/boards");
  return null;
}

const POINTS = [
  {
    title: "Maps of how a board powers up",
    body: "Your lead technicians draw each board's rails, enables and regulators once, with what every point should read and where to probe it.",
  },
  {
    title: "One reading at a time at the bench",
    body: "A technician is asked for one measurement, sees at once whether it is in range, and is led to the failed part by the shortest path.",
  },
  {
    title: "What fails, and what to stock",
    body: "Every run adds to your shop's record: which parts fail on which boards, how long diagnosis takes and where people get stuck.",
  },
];

export default function LandingRoute() {
  return (
    <div className="min-h-screen">
      <header className="mx-auto flex max-w-5xl items-center justify-between p-6">
        <Logo className="h-8" />
        <nav className="flex gap-3">
          <Link className="btn" to="/login">
            Sign in
          </Link>
          <Link className="btn btn-primary" to="/signup">
            Set up a shop
          </Link>
        </nav>
      </header>
      <main className="mx-auto max-w-5xl px-6 pb-16">
        <section className="py-12">
          <h1 className="max-w-3xl text-4xl font-semibold leading-tight tracking-tight">
            Find the dead rail faster. Teach every technician what your best one knows.
          </h1>
          <p className="mt-4 max-w-2xl text-lg text-muted">
            Railwise is for shops that repair laptop and phone mainboards at component level. It turns the
            power-up sequence in a senior technician's head into a shared map, walks the bench through it
            reading by reading, and carries the repair from intake to payment.
          </p>
        </section>
        <section className="grid gap-4 md:grid-cols-3">
          {POINTS.map((p) => (
            <div key={p.title} className="card">
              <h2 className="mb-2 font-semibold">{p.title}</h2>
              <p className="text-sm text-muted">{p.body}</p>
            </div>
          ))}
        </section>
        <p className="mt-10 text-xs text-muted">
          Board repair involves lithium batteries, hot air and solvents. Railwise shows the usual cautions,
          but your local codes and licensed practice come first.
        </p>
      </main>
    </div>
  );
}

export const meta: Route.MetaFunction = () => [
  { title: "Railwise · power-up maps and guided diagnosis for board repair" },
  {
    name: "description",
    content: "Shared power-up maps, guided bench diagnosis and repair tickets for board-level repair shops.",
  },
];
