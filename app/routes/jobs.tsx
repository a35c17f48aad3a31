import { EmptyState, PageHeader } from "~/components/page-header";
import { requireMember } from "~/server/auth.server";
import type { Route } from "./+types/jobs";

export async function loader({ request }: Route.LoaderArgs) {
  await requireMember(request, { permission: "view:jobs" });
  return null;
}

export default function JobsRoute() {
  return (
    <>
      <PageHeader title="Jobs" subtitle="Repair tickets from intake to pickup." />
      <EmptyState title="No jobs yet">The front desk opens a job when a device comes in.</EmptyState>
    </>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Jobs · Railwise" }];
