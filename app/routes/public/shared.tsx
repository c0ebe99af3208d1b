// /shared/:token — the read-only data room of one order, opened through a share link without signing in.
import { data } from "react-router";
import { OrderFilesTable } from "~/components/order-files-table";
import { EmptyState, PageHeader } from "~/components/ui";
import { DOWNLOAD_URL_SECONDS } from "~/domain/order-files";
import { orderFileList } from "~/models/files/files.server";
import { resolveShareLink, sharedOrderHeading } from "~/models/files/share-links.server";
import { audit } from "~/models/audit.server";
import { notFound } from "~/utils/permissions.server";
import type { Route } from "./+types/shared";
import { useFormat } from "~/components/locale";

export async function loader({ params, context }: Route.LoaderArgs) {
  // The share link's token is this page's only credential; no session is asked for.
  const resolved = await resolveShareLink(params.token);
  if (!resolved) notFound("This share link does not exist. Ask the person who sent it for a new one.");
  if (resolved.status !== "active") {
    return data({ gone: resolved.status, shared: null }, { status: 410, headers: { "Cache-Control": "no-store" } });
  }
  const { link } = resolved;
  const order = await sharedOrderHeading(link.orderId);
  await audit({
    organisationId: link.organisationId,
    action: "share_link_opened",
    subjectType: "share_link",
    subjectId: link.id,
    clientAddress: context.clientAddress,
  });
  return data(
    {
      gone: null,
      shared: {
        token: params.token,
        label: link.label,
        expiresAt: link.expiresAt.toISOString(),
        order,
        files: await orderFileList(link.orderId, { side: "shared" }),
      },
    },
    { headers: { "Cache-Control": "no-store" } },
  );
}

export default function SharedDataRoom({ loaderData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { gone, shared } = loaderData;
  if (!shared) {
    return (
      <div className="mx-auto max-w-xl px-6 py-24 text-center" data-status={410}>
        <p className="font-mono text-sm text-beam-600">Error 410</p>
        <h1 className="mt-2 text-3xl font-bold">This share link no longer opens the data room</h1>
        <p className="mt-4 text-ink-600">
          {gone === "revoked" ? "The organisation that shared it has revoked it." : "It has expired."} Ask the person who sent it for a new one.
        </p>
      </div>
    );
  }
  return (
    <div className="mx-auto max-w-6xl px-6 py-10">
      <PageHeader
        title={shared.order.title}
        subtitle={`Shared read-only by ${shared.order.client} for ${shared.label}, until ${fmt.dateTime(shared.expiresAt)}. Downloads are logged.`}
      />
      {shared.files.length === 0 ? (
        <EmptyState title="No files yet">The lab has not delivered any files for this order yet.</EmptyState>
      ) : (
        <OrderFilesTable
          rows={shared.files}
          caption="Shared files"
          live={false}
          actions={(row) => (
            <a
              href={`/shared/${shared.token}/files/${row.id}`}
              className="font-semibold text-beam-700 underline"
              aria-label={`Download ${row.name} v${row.version}`}
            >
              Download
            </a>
          )}
        />
      )}
      <p className="mt-3 text-xs text-ink-600">Each download link is valid for {Math.round(DOWNLOAD_URL_SECONDS / 60)} minutes.</p>
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Shared data room — Diffractory" },
    { name: "description", content: "A read-only data room of one order's delivered files and lattice checks, shared through a link." },
    { name: "robots", content: "noindex" },
  ];
}
