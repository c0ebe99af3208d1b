// Which workspace a URL belongs to and the check its loaders and actions make.
import type { Section } from "~/domain/workspaces";
import { ADMIN_SECTIONS, CLIENT_SECTIONS, LAB_SECTIONS } from "~/domain/workspaces";
import { notFound, requireAdmin, requireOrgRole } from "~/utils/permissions.server";

export type WorkspaceKind = "client" | "lab" | "admin";

const WORKSPACES: Record<WorkspaceKind, { title: string; sections: Section[] }> = {
  client: { title: "Client workspace", sections: CLIENT_SECTIONS },
  lab: { title: "Lab workspace", sections: LAB_SECTIONS },
  admin: { title: "Admin", sections: ADMIN_SECTIONS },
};

export function workspaceOf(request: Request): WorkspaceKind {
  const first = new URL(request.url).pathname.split("/")[1];
  if (first === "client" || first === "lab" || first === "admin") return first;
  notFound();
}

/** Admits only the people of this workspace: members of a client or lab organisation, or admins. */
export async function requireWorkspace(request: Request) {
  const kind = workspaceOf(request);
  const actor = kind === "admin" ? await requireAdmin(request) : await requireOrgRole(request, kind);
  return { kind, actor, ...WORKSPACES[kind] };
}
