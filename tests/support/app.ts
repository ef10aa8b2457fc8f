import { createRequestHandler, type ServerBuild } from "react-router";
import path from "node:path";
import { pathToFileURL } from "node:url";

// Drives the production build in-process: real routing, loaders, actions and rendering, no port.
// `npm run build` (the test script does it) must have run first.
let handler: ((request: Request) => Promise<Response>) | undefined;

export async function appHandler() {
  if (!handler) {
    // TEST_BUILD_DIR lets a developer test a build kept apart from the working tree's build/.
    const buildPath = path.resolve(process.env.TEST_BUILD_DIR ?? path.resolve(import.meta.dirname, "../../build"), "server/index.js");
    const build = (await import(pathToFileURL(buildPath).href)) as ServerBuild;
    const h = createRequestHandler(build, "production");
    handler = (request) => h(request);
  }
  return handler;
}

export const ORIGIN = "http://127.0.0.1:3210";

export type Jar = { cookie?: string };

/** Sends a request to the app; keeps the session cookie in `jar` across calls. */
export async function request(
  pathname: string,
  init: { method?: string; form?: Record<string, string>; headers?: Record<string, string>; body?: BodyInit; jar?: Jar } = {},
) {
  const headers = new Headers(init.headers);
  if (init.jar?.cookie) headers.set("Cookie", init.jar.cookie);
  let body = init.body;
  if (init.form) {
    body = new URLSearchParams(init.form);
    headers.set("Content-Type", "application/x-www-form-urlencoded");
  }
  const method = init.method ?? (init.form || init.body ? "POST" : "GET");
  if (method !== "GET" && !headers.has("Origin")) headers.set("Origin", ORIGIN);
  const response = await (await appHandler())(new Request(new URL(pathname, ORIGIN), { method, headers, body, redirect: "manual" }));
  const setCookie = response.headers.get("Set-Cookie");
  if (setCookie && init.jar) {
    const first = setCookie.split(";")[0];
    init.jar.cookie = first.endsWith("=") ? undefined : first;
  }
  return response;
}

/** Signs in through the real sign-in action and returns the cookie jar. */
export async function signIn(email: string, password: string): Promise<Jar> {
  const jar: Jar = {};
  const res = await request("/sign-in", { form: { email, password, redirectTo: "/" }, jar });
  if (res.status !== 302 && res.status !== 204) {
    throw new Error(`sign-in as ${email} failed with ${res.status}: ${(await res.text()).slice(0, 300)}`);
  }
  if (!jar.cookie) throw new Error(`sign-in as ${email} set no cookie`);
  return jar;
}
