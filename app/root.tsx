import { isRouteErrorResponse, Links, Meta, Outlet, Scripts, ScrollRestoration, useLocation } from "react-router";
import type { Route } from "./+types/root";
import "./app.css";
import { ErrorPage } from "./components/error-page.tsx";
import { useNonce } from "./utils/nonce.ts";

export const meta: Route.MetaFunction = () => [{ title: "Ripplemark" }];

export function Layout({ children }: { children: React.ReactNode }) {
  const nonce = useNonce();
  const location = useLocation();
  return (
    <html lang="en-GB">
      <head>
        <meta charSet="utf-8" />
        <meta name="viewport" content="width=device-width, initial-scale=1" />
        <link rel="icon" href="/favicon.svg" type="image/svg+xml" />
        <Meta />
        <Links />
      </head>
      {/* data-location changes in the same commit as the page, so scripts (and the browser tests) can
          tell a finished client navigation from one whose address has changed but whose page has not. */}
      <body className="min-h-screen" data-location={location.pathname + location.search}>
        {children}
        <ScrollRestoration nonce={nonce} />
        <Scripts nonce={nonce} />
      </body>
    </html>
  );
}

export default function App() {
  return <Outlet />;
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  if (isRouteErrorResponse(error)) {
    return <ErrorPage status={error.status} detail={typeof error.data === "string" ? error.data : undefined} />;
  }
  const dev = import.meta.env.DEV;
  return (
    <ErrorPage
      status={500}
      detail={dev && error instanceof Error ? error.message : undefined}
      stack={dev && error instanceof Error ? error.stack : undefined}
    />
  );
}
