// One status-aware error page for thrown responses (403, 404, …) and unexpected errors.
import { isRouteErrorResponse, Link, useRouteError } from "react-router";

const TITLES: Record<number, string> = {
  400: "That request could not be read",
  401: "Sign in first",
  403: "No access",
  404: "Not found",
  429: "Too many requests",
};

export function GeneralErrorBoundary() {
  const error = useRouteError();
  let status = 500;
  let message = "Something went wrong on our side. The team has been told; please try again in a moment.";
  if (isRouteErrorResponse(error)) {
    status = error.status;
    const body = error.data as { message?: string; error?: string } | string | undefined;
    message = typeof body === "string" ? body : (body?.message ?? body?.error ?? error.statusText);
  } else if (import.meta.env.DEV && error instanceof Error) {
    message = error.message;
  }
  return (
    <main className="mx-auto max-w-xl px-6 py-24 text-center" data-status={status}>
      <p className="font-mono text-sm text-beam-600">Error {status}</p>
      <h1 className="mt-2 text-3xl font-bold">{TITLES[status] ?? "Something went wrong"}</h1>
      <p className="mt-4 text-ink-600">{message}</p>
      <div className="mt-8 flex justify-center gap-3">
        <Link to="/" className="btn-secondary">
          Home
        </Link>
        {status === 403 || status === 401 ? (
          <Link to="/sign-in" className="btn-primary">
            Sign in as someone else
          </Link>
        ) : null}
      </div>
    </main>
  );
}
