// /client/:section, /lab/:section, /admin/:section — a workspace screen that has no records yet.
import { useLoaderData } from "react-router";
import { SectionPage } from "~/components/section-page";
import { findSection } from "~/domain/workspaces";
import { requireWorkspace } from "~/models/workspace-access.server";
import { notFound } from "~/utils/permissions.server";
import type { Route } from "./+types/workspace-section";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { sections } = await requireWorkspace(request);
  const section = findSection(sections, params.section);
  if (!section) notFound("This workspace has no such screen.");
  return { section };
}

export default function WorkspaceSection() {
  const { section } = useLoaderData<typeof loader>();
  return <SectionPage section={section} />;
}

export function meta({ data }: Route.MetaArgs) {
  return [{ title: `${data?.section.label ?? "Not found"} — Diffractory` }];
}
