import { EmptyState, PageHeader } from "~/components/page-header";
import { requireMember } from "~/server/auth.server";
import type { Route } from "./+types/insights";

export async function loader({ request }: Route.LoaderArgs) {
  await requireMember(request, { permission: "view:insights" });
  return null;
}

export default function InsightsRoute() {
  return (
    <>
      <PageHeader
        title="Insights"
        subtitle="Which nodes fail most, how long diagnosis takes, what to stock."
      />
      <EmptyState title="Nothing to show yet">Insights fill in as runs are completed.</EmptyState>
    </>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Insights · Railwise" }];
