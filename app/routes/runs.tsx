import { EmptyState, PageHeader } from "~/components/page-header";
import { requireMember } from "~/server/auth.server";
import type { Route } from "./+types/runs";

export async function loader({ request }: Route.LoaderArgs) {
  await requireMember(request, { permission: "view:runs" });
  return null;
}

export default function RunsRoute() {
  return (
    <>
      <PageHeader title="Runs" subtitle="Guided diagnoses at the bench, one reading at a time." />
      <EmptyState title="No runs yet">A run starts from a board's published power-up map.</EmptyState>
    </>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Runs · Railwise" }];
