// /client/data-room/:orderId — one order's files with versions and checks, share links, and who downloaded what.
// Delivered files cannot be deleted within the retention period; a client archives them from view and restores them
// under "Show archived" (?archived=1), each move in the audit log.
import { requireOrderSide } from "~/utils/permissions.server";
import { getFormProps, getInputProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, Link, useNavigation } from "react-router";
import { z } from "zod";
import { OrderFilesTable } from "~/components/order-files-table";
import { useRefreshWhile } from "~/components/refresh-while";
import { RevokeButton, ShownOnce } from "~/components/shown-once";
import { Badge, EmptyState, Field, FormError, PageHeader, TableCard } from "~/components/ui";
import { DOWNLOAD_URL_SECONDS, RETENTION_YEARS, SHARE_LINK_MAX_DAYS, SHARE_LINK_MAX_LIVE } from "~/domain/order-files";
import { organisationNameOf } from "~/models/accounts/organisations.server";
import { requestTitleOf } from "~/models/requests/requests.server";
import { archiveFile, fileOfOrder, orderAccessLog, orderFileList, restoreFile, softDeleteFile } from "~/models/files/files.server";
import { OrderStateBadge } from "~/components/order-state-badge";
import { createShareLink, listShareLinks, revokeShareLink, ShareLinkLimit } from "~/models/files/share-links.server";
import { audit } from "~/models/audit.server";
import { config } from "~/config.server";
import { redirectWithToast } from "~/utils/toast.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/data-room-order";
import { useFormat } from "~/components/locale";

const clientOrder = (request: Request, orderId: string) => requireOrderSide(request, "client", orderId);

export async function loader({ request, params }: Route.LoaderArgs) {
  const { order } = await clientOrder(request, params.orderId);
  const [title, lab] = await Promise.all([requestTitleOf(order.requestId), organisationNameOf(order.labId)]);
  const showArchived = new URL(request.url).searchParams.get("archived") === "1";
  const files = await orderFileList(order.id, { side: "client", archived: true });
  return {
    order: { id: order.id, number: order.number, state: order.state, title: title ?? "", lab: lab ?? "" },
    files: showArchived ? files : files.filter((f) => !f.archivedAt),
    archivedCount: files.filter((f) => f.archivedAt).length,
    showArchived,
    shareLinks: await listShareLinks(order.id),
    accessLog: await orderAccessLog(order.id),
  };
}

const ShareSchema = z.object({
  intent: z.literal("share"),
  label: z.string({ error: "Say who the link is for." }).trim().min(2, "Say who the link is for.").max(120),
  days: z.coerce
    .number({ error: "Give the number of days." })
    .int("Give a whole number of days.")
    .min(1, "At least one day.")
    .max(SHARE_LINK_MAX_DAYS, `At most ${SHARE_LINK_MAX_DAYS} days.`),
});
const ActionSchema = z.discriminatedUnion("intent", [
  ShareSchema,
  z.object({ intent: z.literal("revoke"), linkId: z.uuid({ error: "Choose a link." }) }),
  z.object({ intent: z.literal("delete"), fileId: z.uuid({ error: "Choose a file." }) }),
  z.object({ intent: z.literal("archive"), fileId: z.uuid({ error: "Choose a file." }) }),
  z.object({ intent: z.literal("restore"), fileId: z.uuid({ error: "Choose a file." }) }),
]);

export async function action({ request, params, context }: Route.ActionArgs) {
  const { actor, order } = await clientOrder(request, params.orderId);
  const submission = parseWithZod(await readForm(request), { schema: ActionSchema });
  if (submission.status !== "success") return data({ result: submission.reply(), shared: null }, { status: 400 });
  const value = submission.value;
  const organisationId = actor.membership.organisation.id;
  const here = `/client/data-room/${order.id}`;
  if (value.intent === "share") {
    const expiresAt = new Date(Date.now() + value.days * 86_400_000);
    let created: Awaited<ReturnType<typeof createShareLink>>;
    try {
      created = await createShareLink({ orderId: order.id, organisationId, userId: actor.user.id, label: value.label, expiresAt });
    } catch (err) {
      if (err instanceof ShareLinkLimit) return data({ result: submission.reply({ formErrors: [err.message] }), shared: null }, { status: 400 });
      throw err;
    }
    const { link, token } = created;
    await audit({
      actorUserId: actor.user.id,
      organisationId,
      action: "share_link_created",
      subjectType: "share_link",
      subjectId: link.id,
      details: { orderId: order.id, label: value.label, expiresAt },
      clientAddress: context.clientAddress,
    });
    // The token is shown this once; only its SHA-256 is stored.
    return data({
      result: submission.reply({ resetForm: true }),
      shared: { url: `${config.appUrl}/shared/${token}`, label: link.label, expiresAt: link.expiresAt.toISOString() },
    });
  }
  if (value.intent === "revoke") {
    if (!(await revokeShareLink(order.id, value.linkId))) {
      return data({ result: submission.reply({ formErrors: ["That link is already revoked or is not one of this order's."] }), shared: null }, { status: 400 });
    }
    await audit({
      actorUserId: actor.user.id,
      organisationId,
      action: "share_link_revoked",
      subjectType: "share_link",
      subjectId: value.linkId,
      details: { orderId: order.id },
      clientAddress: context.clientAddress,
    });
    return redirectWithToast(here, { kind: "success", message: "Share link revoked; it no longer opens this data room." });
  }
  const file = await fileOfOrder(order.id, value.fileId);
  if (!file || file.state !== "stored" || file.deletedAt) {
    return data({ result: submission.reply({ formErrors: ["That file is not in this data room."] }), shared: null }, { status: 400 });
  }
  if (value.intent === "archive" || value.intent === "restore") {
    const archiving = value.intent === "archive";
    if (archiving) await archiveFile(file, actor.user.id);
    else await restoreFile(file);
    await audit({
      actorUserId: actor.user.id,
      organisationId,
      action: archiving ? "order_file_archived" : "order_file_restored",
      subjectType: "order_file",
      subjectId: file.id,
      details: { orderId: order.id, name: file.name, version: file.version },
      clientAddress: context.clientAddress,
    });
    return redirectWithToast(archiving ? here : `${here}?archived=1`, {
      kind: "success",
      message: archiving
        ? `${file.name} v${file.version} archived: hidden from this data room, kept as delivered; "Show archived" brings it back.`
        : `${file.name} v${file.version} restored to the data room.`,
    });
  }
  if (actor.membership.role !== "owner") {
    return data({ result: submission.reply({ formErrors: ["Only an owner of the organisation can delete files."] }), shared: null }, { status: 403 });
  }
  const deleted = await softDeleteFile(file, actor.user.id);
  if ("refused" in deleted) return data({ result: submission.reply({ formErrors: [deleted.refused] }), shared: null }, { status: 400 });
  await audit({
    actorUserId: actor.user.id,
    organisationId,
    action: "order_file_deleted",
    subjectType: "order_file",
    subjectId: file.id,
    details: { orderId: order.id, name: file.name, version: file.version },
    clientAddress: context.clientAddress,
  });
  return redirectWithToast(here, {
    kind: "success",
    message: `${file.name} v${file.version} deleted from the data room; the lab's copy is kept for ${RETENTION_YEARS} years.`,
  });
}

export default function DataRoomOrder({ loaderData, actionData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { order, files, shareLinks, accessLog, archivedCount, showArchived } = loaderData;
  const busy = useNavigation().state !== "idle";
  // While the lab has the samples, new files and the order's next state show up without a reload; not after an
  // action, whose answer (a share link shown once, a form error) a refresh would clear.
  useRefreshWhile((order.state === "samples_received" || order.state === "measuring") && !actionData);
  const [form, fields] = useForm({
    id: "share-link",
    lastResult: actionData?.result,
    defaultValue: { days: "14" },
    onValidate: ({ formData }) => parseWithZod(formData, { schema: ShareSchema }),
    shouldValidate: "onBlur",
    shouldRevalidate: "onInput",
  });
  return (
    <div className="space-y-8">
      <PageHeader
        title={order.title}
        subtitle={
          <>
            {order.lab} ·{" "}
            <Link to="/client/data-room" className="underline">
              Data room
            </Link>{" "}
            ·{" "}
            <Link to={`/client/orders/${order.id}`} className="underline">
              Order {order.number}
            </Link>
          </>
        }
        actions={<OrderStateBadge state={order.state} />}
      />
      <FormError errors={form.errors} />

      <section aria-labelledby="files-heading" className="space-y-2">
        <h2 id="files-heading" className="text-lg font-semibold">
          Files
        </h2>
        <p className="text-xs text-ink-600">
          Every version is kept. A download link is valid for {Math.round(DOWNLOAD_URL_SECONDS / 60)} minutes and each download is logged. Delivered data is
          kept as delivered for {RETENTION_YEARS} years and cannot be deleted in that time; archiving hides a file here and can be undone.
        </p>
        {archivedCount > 0 || showArchived ? (
          <p className="text-sm">
            {showArchived ? (
              <Link to={`/client/data-room/${order.id}`} className="underline">
                Hide archived files
              </Link>
            ) : (
              <Link to={`/client/data-room/${order.id}?archived=1`} className="underline">
                Show archived ({archivedCount})
              </Link>
            )}
          </p>
        ) : null}
        {files.length === 0 ? (
          <EmptyState title="No files delivered yet">The lab's scans and report appear here as soon as they are uploaded and verified.</EmptyState>
        ) : (
          <OrderFilesTable
            rows={files}
            caption="Delivered files"
            actions={(row) => (
              <span className="inline-flex items-center gap-3">
                <a href={`/files/${row.id}/download`} className="font-semibold text-beam-700 underline" aria-label={`Download ${row.name} v${row.version}`}>
                  Download
                </a>
                {row.archivedAt ? <Badge tone="neutral">Archived</Badge> : null}
                <Form method="post">
                  <input type="hidden" name="intent" value={row.archivedAt ? "restore" : "archive"} />
                  <input type="hidden" name="fileId" value={row.id} />
                  <button
                    type="submit"
                    className="text-xs text-ink-700 underline"
                    disabled={busy}
                    aria-label={`${row.archivedAt ? "Restore" : "Archive"} ${row.name} v${row.version}`}
                  >
                    {row.archivedAt ? "Restore" : "Archive"}
                  </button>
                </Form>
              </span>
            )}
          />
        )}
      </section>

      <section aria-labelledby="share-heading" className="space-y-3">
        <h2 id="share-heading" className="text-lg font-semibold">
          Share links
        </h2>
        <p className="text-sm text-ink-600">
          A read-only link for a colleague outside the organisation: they see this order's files and can download them, without signing in, until the link
          expires or you revoke it. Every use is logged below. An order can have up to {SHARE_LINK_MAX_LIVE} live links at a time.
        </p>
        <Form method="post" className="card grid gap-4 sm:grid-cols-[1fr_10rem_auto] sm:items-start" {...getFormProps(form)}>
          <input type="hidden" name="intent" value="share" />
          <Field label="Who it is for" id={fields.label.id} errors={fields.label.errors} hint="e.g. Dr. Aino Kettunen, external auditor">
            <input className="input" {...getInputProps(fields.label, { type: "text" })} />
          </Field>
          <Field label="Valid for (days)" id={fields.days.id} errors={fields.days.errors}>
            <input className="input" {...getInputProps(fields.days, { type: "number" })} min={1} max={SHARE_LINK_MAX_DAYS} />
          </Field>
          <button type="submit" className="btn-primary sm:mt-6" disabled={busy}>
            Create share link
          </button>
        </Form>
        {actionData?.shared ? (
          <ShownOnce
            title={`Share link for ${actionData.shared.label}`}
            label="New share link"
            value={actionData.shared.url}
            note={`Valid until ${fmt.dateTime(actionData.shared.expiresAt)}.`}
          />
        ) : null}
        {shareLinks.length ? (
          <TableCard columns={["For", "Created", "Valid until", "State", ""]} caption="Share links">
            {shareLinks.map((l) => (
              <tr key={l.id}>
                <td className="font-medium">{l.label}</td>
                <td className="text-xs">
                  {l.createdBy ?? "—"}
                  <span className="block">{fmt.dateTime(l.createdAt)}</span>
                </td>
                <td className="text-xs">{fmt.dateTime(l.expiresAt)}</td>
                <td>
                  <Badge tone={l.status === "active" ? "ok" : "neutral"}>
                    {l.status === "active" ? "Active" : l.status === "expired" ? "Expired" : "Revoked"}
                  </Badge>
                </td>
                <td className="text-right">
                  {l.status === "active" ? <RevokeButton field="linkId" id={l.id} label={`Revoke the link for ${l.label}`} busy={busy} /> : null}
                </td>
              </tr>
            ))}
          </TableCard>
        ) : null}
      </section>

      <section aria-labelledby="log-heading" className="space-y-2">
        <h2 id="log-heading" className="text-lg font-semibold">
          Access log
        </h2>
        {accessLog.length === 0 ? (
          <p className="text-sm text-ink-600">Nobody has downloaded a file of this order yet.</p>
        ) : (
          <TableCard columns={["When", "File", "Who", "From"]} caption="Access log">
            {accessLog.map((a) => (
              <tr key={a.id}>
                <td className="text-xs">{fmt.dateTime(a.at)}</td>
                <td>
                  {a.fileName} <span className="font-mono text-xs text-ink-500">v{a.version}</span>
                </td>
                <td>{a.person ?? (a.shareLabel ? `Share link: ${a.shareLabel}` : "—")}</td>
                <td className="font-mono text-xs">{a.clientAddress ?? "—"}</td>
              </tr>
            ))}
          </TableCard>
        )}
      </section>
    </div>
  );
}

export function meta({ data }: Route.MetaArgs) {
  return [
    { title: `${data?.order.title ?? "Data room"} — Diffractory` },
    { name: "description", content: "One order's delivered files with their versions and lattice checks, share links and who downloaded what." },
  ];
}
