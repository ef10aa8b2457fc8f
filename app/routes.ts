import { type RouteConfig, index, layout, prefix, route } from "@react-router/dev/routes";

// Every page and API route is listed here. Each route module authorises its own loader and action
// with requireUser(request, { roles }); the role-gated sections are grouped for readability only.
export default [
  route("sign-in", "routes/auth/sign-in.tsx"),
  route("sign-out", "routes/auth/sign-out.ts"),
  route("forgot-password", "routes/auth/forgot-password.tsx"),
  route("reset-password/:token", "routes/auth/reset-password.tsx"),

  layout("routes/app-layout.tsx", [
    index("routes/overview.tsx"),
    route("account", "routes/account.tsx"),

  ]),

  route("api/health", "routes/api/health.ts"),
  route("*", "routes/not-found.tsx"),
] satisfies RouteConfig;
