// A workspace screen that has no records yet: its title and an empty state saying what comes next.
import { EmptyState, PageHeader } from "./ui";
import type { Section } from "~/domain/workspaces";

export function SectionPage({ section }: { section: Section }) {
  return (
    <div>
      <PageHeader title={section.label} />
      <EmptyState title={section.emptyTitle}>{section.emptyBody}</EmptyState>
    </div>
  );
}
