import { useRouteLoaderData } from "react-router";
import { can, type Permission, type Role } from "~/lib/permissions";

type LayoutData = { user: { id: string; name: string }; shop: { id: string; name: string }; role: Role };

/** For hiding UI only; every route's server guard is what actually refuses. */
export function useMember() {
  const data = useRouteLoaderData("routes/app-layout") as LayoutData | undefined;
  return {
    member: data ?? null,
    can: (permission: Permission) => can(data?.role, permission),
  };
}
