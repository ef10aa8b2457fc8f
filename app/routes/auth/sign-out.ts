import { redirect } from "react-router";
import type { Route } from "./+types/sign-out";
import { assertSameOrigin } from "#app/utils/auth.server.ts";
import { signOutResponse } from "#app/utils/session.server.ts";

// Sign-out is a POST (a link could be triggered by another site). GET just goes home.
export async function loader() {
  throw redirect("/");
}

export async function action({ request }: Route.ActionArgs) {
  assertSameOrigin(request);
  return signOutResponse(request);
}
