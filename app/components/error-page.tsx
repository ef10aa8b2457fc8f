import { Link } from "react-router";

const COPY: Record<number, { title: string; body: string }> = {
  400: { title: "That request could not be understood", body: "Something in the address or form was not valid." },
  401: { title: "Please sign in", body: "Your session has ended. Sign in again to carry on." },
  403: { title: "Not open to your role", body: "This part of Ripplemark belongs to another role. If you need it, ask an administrator." },
  404: { title: "Nothing here", body: "The page or record you asked for does not exist, or it has been removed." },
  500: { title: "Something went wrong on our side", body: "The error has been logged. Try again in a moment; nothing you entered has been lost." },
  503: { title: "Ripplemark cannot reach its database just now", body: "This usually passes within a minute (a restart or maintenance). Nothing already saved is affected; try again shortly, and tell an administrator if it goes on." },
};

export function ErrorPage({ status, detail, stack }: { status: number; detail?: string; stack?: string }) {
  const copy = COPY[status] ?? { title: `Error ${status}`, body: "The request could not be completed." };
  return (
    <main className="mx-auto max-w-xl p-8" aria-labelledby="error-title">
      <p className="text-sm font-semibold text-ink-500">Ripplemark · {status}</p>
      <h1 id="error-title" className="mt-1">{copy.title}</h1>
      <p className="mt-3 text-ink-700">{copy.body}</p>
      {detail ? <p className="mt-3 text-ink-700">{detail}</p> : null}
      {stack ? <pre className="mt-4 overflow-auto rounded bg-ink-100 p-3 text-xs">{stack}</pre> : null}
      <p className="mt-6 flex gap-3">
        <Link className="btn" to="/">Go to the overview</Link>
        {status === 401 || status === 403 ? <Link className="btn-quiet" to="/sign-in">Sign in as someone else</Link> : null}
      </p>
    </main>
  );
}
