// /lab/api-tokens — tokens for uploads straight from the lab's instrument computers: create (shown once), revoke, last use.
import { getFormProps, getInputProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, useNavigation } from "react-router";
import { z } from "zod";
import { RevokeButton, ShownOnce } from "~/components/shown-once";
import { Badge, EmptyState, Field, FormError, PageHeader, TableCard } from "~/components/ui";
import { config } from "~/config.server";
import { API_TOKEN_RATE_LIMIT, createApiToken, listApiTokens, revokeApiToken } from "~/models/accounts/api-tokens.server";
import { MAX_FILE_BYTES, SCAN_INSTRUMENT_EXTENSIONS, SCAN_MAX_BYTES, SCAN_TEXT_EXTENSIONS, formatBytes } from "~/domain/order-files";
import { audit } from "~/models/audit.server";
import { requireOrgRole } from "~/utils/permissions.server";
import { redirectWithToast } from "~/utils/toast.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/api-tokens";
import { useFormat } from "~/components/locale";

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "lab");
  return {
    tokens: await listApiTokens(membership.organisation.id),
    canManage: membership.role === "manager",
    appUrl: config.appUrl,
    limit: API_TOKEN_RATE_LIMIT,
  };
}

const CreateSchema = z.object({
  intent: z.literal("create"),
  name: z.string({ error: "Name the computer or instrument the token is for." }).trim().min(2, "Name the computer or instrument the token is for.").max(80),
});
const ActionSchema = z.discriminatedUnion("intent", [CreateSchema, z.object({ intent: z.literal("revoke"), tokenId: z.uuid({ error: "Choose a token." }) })]);

export async function action({ request, context }: Route.ActionArgs) {
  const { membership, user } = await requireOrgRole(request, "lab", ["manager"]);
  const labId = membership.organisation.id;
  const submission = parseWithZod(await readForm(request), { schema: ActionSchema });
  if (submission.status !== "success") return data({ result: submission.reply(), created: null }, { status: 400 });
  if (submission.value.intent === "create") {
    const { token, row } = await createApiToken(labId, submission.value.name, user.id);
    await audit({
      actorUserId: user.id,
      organisationId: labId,
      action: "api_token_created",
      subjectType: "api_token",
      subjectId: row.id,
      details: { name: row.name, prefix: row.prefix },
      clientAddress: context.clientAddress,
    });
    // Shown this once; only its SHA-256 is stored.
    return data({ result: submission.reply({ resetForm: true }), created: { name: row.name, token } });
  }
  if (!(await revokeApiToken(labId, submission.value.tokenId))) {
    return data({ result: submission.reply({ formErrors: ["That token is already revoked or is not your lab's."] }), created: null }, { status: 400 });
  }
  await audit({
    actorUserId: user.id,
    organisationId: labId,
    action: "api_token_revoked",
    subjectType: "api_token",
    subjectId: submission.value.tokenId,
    clientAddress: context.clientAddress,
  });
  return redirectWithToast("/lab/api-tokens", { kind: "success", message: "Token revoked; uploads with it are refused from now on." });
}

export default function ApiTokens({ loaderData, actionData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { tokens, canManage, appUrl, limit } = loaderData;
  const busy = useNavigation().state !== "idle";
  const [form, fields] = useForm({
    id: "api-token",
    lastResult: actionData?.result,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: CreateSchema }),
    shouldValidate: "onBlur",
    shouldRevalidate: "onInput",
  });
  return (
    <div className="space-y-6">
      <PageHeader
        title="API tokens"
        subtitle="Instrument computers upload scans straight to your orders with a token. A token reaches only your lab's orders and can be revoked at any time."
      />
      <FormError errors={form.errors} />
      {canManage ? (
        <Form method="post" className="card grid gap-4 sm:grid-cols-[1fr_auto] sm:items-start" {...getFormProps(form)}>
          <input type="hidden" name="intent" value="create" />
          <Field label="Token for" id={fields.name.id} errors={fields.name.errors} hint="e.g. Diffractometer 2 control PC">
            <input className="input" {...getInputProps(fields.name, { type: "text" })} />
          </Field>
          <button type="submit" className="btn-primary sm:mt-6" disabled={busy}>
            Create token
          </button>
        </Form>
      ) : (
        <p className="text-sm text-ink-600">A lab manager creates and revokes tokens.</p>
      )}
      {actionData?.created ? <ShownOnce title={`Token for ${actionData.created.name}`} label="New API token" value={actionData.created.token} /> : null}
      {tokens.length === 0 ? (
        <EmptyState title="No API tokens">Create a token for uploads straight from the instrument computer.</EmptyState>
      ) : (
        <TableCard columns={["For", "Token", "Created", "Last used", "State", ""]} caption="API tokens">
          {tokens.map((t) => (
            <tr key={t.id}>
              <td className="font-medium">{t.name}</td>
              <td className="font-mono text-xs">{t.prefix}…</td>
              <td className="text-xs">
                {t.createdBy ?? "—"}
                <span className="block">{fmt.dateTime(t.createdAt)}</span>
              </td>
              <td className="text-xs">{t.lastUsedAt ? fmt.dateTime(t.lastUsedAt) : "never"}</td>
              <td>{t.revokedAt ? <Badge tone="neutral">Revoked</Badge> : <Badge tone="ok">Active</Badge>}</td>
              <td className="text-right">
                {canManage && !t.revokedAt ? <RevokeButton field="tokenId" id={t.id} label={`Revoke the token for ${t.name}`} busy={busy} /> : null}
              </td>
            </tr>
          ))}
        </TableCard>
      )}
      <section className="card text-sm" aria-labelledby="api-heading">
        <h2 id="api-heading" className="text-lg font-semibold">
          Uploading from an instrument computer
        </h2>
        <ol className="mt-2 list-decimal space-y-2 pl-5 text-ink-700">
          <li>
            <code className="font-mono text-xs">POST {appUrl}/api/v1/orders/&lt;order id&gt;/files</code> with{" "}
            <code className="font-mono text-xs">Authorization: Bearer &lt;token&gt;</code> and JSON{" "}
            <code className="font-mono text-xs">{`{"name", "size", "sha256", "sampleId"?, "kind"?}`}</code>. The answer names the upload: one{" "}
            <code className="font-mono text-xs">url</code> to PUT the file to, or (above 16 MB) a list of <code className="font-mono text-xs">parts</code>, each
            PUT with its slice of <code className="font-mono text-xs">partSize</code> bytes.
          </li>
          <li>
            <code className="font-mono text-xs">POST</code> the answer's <code className="font-mono text-xs">completeUrl</code> with{" "}
            <code className="font-mono text-xs">{`{"parts": [{"partNumber", "etag"}]}`}</code> (the ETag header of each part's answer). The stored file is
            checked — type by content, size, SHA-256 — before it counts as delivered.
          </li>
        </ol>
        <p className="mt-2 text-xs text-ink-600">
          Scans are text files ({SCAN_TEXT_EXTENSIONS.join(", ")}) or the instrument&apos;s own files ({SCAN_INSTRUMENT_EXTENSIONS.join(", ")}), up to{" "}
          {formatBytes(SCAN_MAX_BYTES)}; each scan is read at once, and one no reader can read is answered 422 with the reason (nothing is kept). A stored
          scan&apos;s answer names its format and any warning (a radiation other than the quote&apos;s instrument). Reports are PDF; at most{" "}
          {formatBytes(MAX_FILE_BYTES)} per file. Each token may make {limit.limit} requests a minute; more are answered 429 with Retry-After.
        </p>
      </section>
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "API tokens — Diffractory" },
    { name: "description", content: "Tokens that let your instrument computers upload scans straight to an order; create, revoke and see their last use." },
  ];
}
