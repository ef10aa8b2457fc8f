import { data } from "react-router";
import { ErrorPage } from "#app/components/error-page.tsx";

// Catch-all: unknown addresses get the friendly 404 page (and a real 404 status).
export function loader() {
  throw data("No page at this address.", { status: 404 });
}

export function action() {
  throw data("No page at this address.", { status: 404 });
}

export default function NotFound() {
  return <ErrorPage status={404} />;
}
