// One status-aware error page for thrown responses (403, 404, …) and unexpected errors.
import { isRouteErrorResponse, Link, useRouteError } from "react-router";

const TITLES: Record<number, string> = {
  400: "That request could not be read",
  401: "Sign in first",
  403: "No access",
  404: "Not found",
  429: "Too many requests",
};

/**
 * On its own it is the whole page. Given a workspace, it is one screen of that workspace's shell, which already holds
 * the page's <main> and its navigation, so it offers the way back to the workspace's overview instead of the home page.
 */
export function GeneralErrorBoundary({ workspace }: { workspace?: { overview: string } } = {}) {
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
  const Frame = workspace ? "section" : "main";
  return (
    <Frame className={`mx-auto max-w-xl text-center ${workspace ? "py-16" : "px-6 py-24"}`} data-status={status}>
      <p className="font-mono text-sm text-beam-600">Error {status}</p>
      <h1 className="mt-2 text-3xl font-bold">{TITLES[status] ?? "Something went wrong"}</h1>
      <p className="mt-4 text-ink-600">{message}</p>
      <div className="mt-8 flex justify-center gap-3">
        <Link to={workspace?.overview ?? "/"} className="btn-secondary">
          {workspace ? "Back to the overview" : "Home"}
        </Link>
        {status === 403 || status === 401 ? (
          <Link to="/sign-in" className="btn-primary">
            Sign in as someone else
          </Link>
        ) : null}
      </div>
    </Frame>
  );
}
