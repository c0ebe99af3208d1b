// Any address no route claims: a 404 page.
import { notFound } from "~/utils/permissions.server";
import type { Route } from "./+types/not-found";

export async function loader(_: Route.LoaderArgs) {
  notFound("No page lives at this address.");
}

export async function action(_: Route.ActionArgs) {
  notFound("No page lives at this address.");
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Page not found — Diffractory" }, { name: "description", content: "No page lives at this address on Diffractory." }];
}

export default function NotFound() {
  return null;
}

export { GeneralErrorBoundary as ErrorBoundary } from "~/components/error-boundary";
