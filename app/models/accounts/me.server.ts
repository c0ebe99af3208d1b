// The signed-in person as the app's screens and /api/me see them.
import type { Actor } from "~/models/accounts/actors.server";

export interface MeSummary {
  user: { id: string; name: string; email: string; isAdmin: boolean };
  organisations: { id: string; name: string; slug: string; kind: "client" | "lab"; role: string }[];
  activeOrganisationId: string | null;
}

export function summariseActor(actor: Actor): MeSummary {
  return {
    user: { id: actor.user.id, name: actor.user.name, email: actor.user.email, isAdmin: actor.user.isAdmin },
    organisations: actor.memberships.map((m) => ({
      id: m.organisation.id,
      name: m.organisation.name,
      slug: m.organisation.slug,
      kind: m.organisation.kind,
      role: m.role,
    })),
    activeOrganisationId: actor.active?.organisation.id ?? null,
  };
}
