import { index, layout, type RouteConfig, route } from "@react-router/dev/routes";

export default [
  index("routes/landing.tsx"),
  route("login", "routes/login.tsx"),
  route("signup", "routes/signup.tsx"),
  route("logout", "routes/logout.ts"),
  route("forgot-password", "routes/forgot-password.tsx"),
  route("reset-password/:token", "routes/reset-password.tsx"),
  route("invite/:token", "routes/invite.tsx"),
  route("healthz", "routes/healthz.ts"),
  route("theme", "routes/theme.ts"),
  route("dev/outbox", "routes/dev-outbox.tsx"),
  route("dev/outbox.json", "routes/dev-outbox-json.ts"),
  layout("routes/app-layout.tsx", [
    route("boards", "routes/boards.tsx"),
    route("boards/:boardId", "routes/board.tsx"),
    route("runs", "routes/runs.tsx"),
    route("jobs", "routes/jobs.tsx"),
    route("insights", "routes/insights.tsx"),
    route("settings", "routes/settings.tsx"),
    route("switch-shop", "routes/switch-shop.ts"),
  ]),
  route("*", "routes/not-found.tsx"),
] satisfies RouteConfig;
